/** Kicks off the opened page's route chunks (route-prefetch.ts) through Expo Router's own lazy route context. Web only. */
import { ctx } from 'expo-router/_ctx';
import { routeFilesFor } from './route-prefetch';

if (typeof location !== 'undefined' && typeof location.pathname === 'string') {
  for (const file of routeFilesFor(location.pathname)) {
    // A failed prefetch is harmless: the router asks again and shows its own error.
    try {
      Promise.resolve(ctx(file)).catch(() => undefined);
    } catch {
      // not a route file in this build
    }
  }
}
