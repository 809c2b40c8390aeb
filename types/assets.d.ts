/** A font file imported by the app: metro resolves it to an asset module id (expo-font loads it). */
declare module '*.woff2' {
  const asset: number;
  export default asset;
}
