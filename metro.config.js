// Metro (the web export and `npm run dev`): Expo's defaults plus one substitution, see
// components/common/zod-locales-en.js. Node (server, tests) never reads this file.
const path = require('node:path');
const { getDefaultConfig } = require('expo/metro-config');

const config = getDefaultConfig(__dirname);
// The app's fonts ship as subset WOFF2 (scripts/subset-fonts.ts).
config.resolver.assetExts.push('woff2');
const ZOD_LOCALE_INDEX = /[\\/]zod[\\/]v4[\\/]locales[\\/]index\.c?js$/;
const ENGLISH_ONLY = path.join(__dirname, 'components', 'common', 'zod-locales-en.js');

config.resolver.resolveRequest = (context, moduleName, platform) => {
  const resolved = context.resolveRequest(context, moduleName, platform);
  if (resolved.type === 'sourceFile' && ZOD_LOCALE_INDEX.test(resolved.filePath)) return { type: 'sourceFile', filePath: ENGLISH_ONLY };
  return resolved;
};

module.exports = config;
