/** Kicks off the opened page's route chunks (route-prefetch.ts) through Expo Router's own lazy route context. Web only. */
import { ctx } from 'expo-router/_ctx';
import { routeFilesFor } from './route-prefetch';

if (typeof location !== 'undefined' && typeof location.pathname === 'string') {
  const files = routeFilesFor(location.pathname);
  // A signed-in page also draws the navigation, which loads in a chunk of its own (components/shell/nav-kit.ts).
  if (files.includes('./(shell)/_layout.tsx')) import('../shell/nav-kit').catch(() => undefined);
  for (const file of files) {
    // A failed prefetch is harmless: the router asks again and shows its own error.
    try {
      Promise.resolve(ctx(file)).catch(() => undefined);
    } catch {
      // not a route file in this build
    }
  }
}
