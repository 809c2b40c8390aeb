/**
 * Which route files the opened page will need, so the entry can start loading their chunks before
 * Expo Router renders. With async routes the router discovers them one after the other (root layout →
 * signed-in shell → the page), each a script request and a render apart; asking for all of them at once
 * lets them load while the entry is still running. route-prefetch-start.ts asks the router's own lazy
 * route context for them, so the chunks are the router's (nothing twice, no second chunk map).
 *
 * Only the first screen matters: later navigation is the router's business.
 */

/** Top-level signed-in pages (app/(shell)/<name>.tsx). tests/unit/route-prefetch.test.ts checks each file exists. */
export const SHELL_PAGES: readonly string[] = [
  'floor',
  'trends',
  'plans',
  'schedule',
  'alarms',
  'readings',
  'devices',
  'rigs',
  'people',
  'approvals',
  'audit',
  'account',
  'mail',
  'qualifications',
];

/** Keys of the router's route context (relative to app/) for a path: the root layout, then sign-in or the shell and its page. */
export function routeFilesFor(pathname: string): string[] {
  const parts = pathname.split('/').filter(Boolean);
  const first = parts[0] ?? '';
  if (!first) return ['./_layout.tsx'];
  if (first === 'sign-in') return ['./_layout.tsx', './sign-in.tsx'];
  // Only a page's own index (e.g. /floor, not /floor/R-07) is worth guessing.
  const page = parts.length === 1 && SHELL_PAGES.includes(first) ? [`./(shell)/${first}.tsx`] : [];
  return ['./_layout.tsx', './(shell)/_layout.tsx', ...page];
}
