/** subset-font 2.9.0 ships no typings; the one call Emberlot makes (scripts/subset-fonts.ts). */
declare module 'subset-font' {
  export default function subsetFont(
    font: Buffer,
    text: string,
    options?: { targetFormat?: 'sfnt' | 'woff' | 'woff2' | 'truetype'; preserveNameIds?: number[] },
  ): Promise<Buffer>;
}
