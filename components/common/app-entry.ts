/**
 * The app's entry (package.json "main"). Side-effect imports run in the order written:
 * 1. `@expo/metro-runtime` first, as Expo Router's own entry requires;
 * 2. `expo`, which installs Metro's chunk loader (`__loadBundleAsync`) — without it an `import()`
 *    falls back to a plain require of a module that is not loaded yet;
 * 3. route-prefetch-start: the opened page's chunks start loading (route-prefetch.ts);
 * 4. Expo Router's entry renders the app.
 */
import '@expo/metro-runtime';
import 'expo';
import './route-prefetch-start';
import 'expo-router/entry';
