/**
 * How the exported web app and the API's JSON travel: compressed, and cached only where the name
 * changes with the content.
 * - Files whose names carry a content hash (`/_expo/static/…-<32 hex>.js`, `/assets/…/<name>.<32 hex>.<ext>`)
 *   are cached for a year as immutable: a new build gives them new names.
 * - `index.html` (the app shell every route answers with) and anything unhashed are never cached, so a
 *   new build is picked up on the next load.
 * - The export is precompressed (brotli and gzip, scripts/web-export.ts): those files are sent as they
 *   are; the API's JSON is compressed on the fly (compression middleware, brotli or gzip by the request's
 *   Accept-Encoding). The floor's live event stream is never compressed (it must flush each event).
 */
import compression from 'compression';
import type { Express, Request, Response } from 'express';
import expressStaticGzip from 'express-static-gzip';
import * as fs from 'node:fs';
import type * as http from 'node:http';
import * as path from 'node:path';

/** A content hash in a file name, as Expo's export writes it (32 hex characters before the extension). */
export const HASHED_NAME = /[-.][0-9a-f]{32}(@\d+x)?\.[a-z0-9]+$/i;
export const IMMUTABLE = 'public, max-age=31536000, immutable';
export const NEVER = 'no-store';

export function cacheControlFor(filePath: string): string {
  return HASHED_NAME.test(path.basename(filePath)) ? IMMUTABLE : NEVER;
}

/** JSON (and any other compressible body) from /api, compressed; never the live stream. */
export function installApiCompression(app: Express): void {
  app.use(
    '/api',
    compression({
      // Below ~1 KB the headers outweigh the gain.
      threshold: 1024,
      filter: (req: Request, res: Response) => {
        const type = String(res.getHeader('Content-Type') ?? '');
        if (type.startsWith('text/event-stream')) return false;
        return compression.filter(req, res);
      },
    }),
  );
}

/** The web export: precompressed files first, cache headers by name, the app shell for every other path. */
export function installWebApp(app: Express, webDir: string): void {
  app.use(
    expressStaticGzip(webDir, {
      enableBrotli: true,
      orderPreference: ['br', 'gzip'],
      index: false,
      serveStatic: {
        index: false,
        // Our own header below; serve-static's default max-age=0 would sit beside it.
        cacheControl: false,
        // No validators: a hashed file is immutable and anything else is no-store, so neither is ever
        // revalidated, and the two headers cost ~75 bytes on every response of a first visit.
        etag: false,
        lastModified: false,
        setHeaders: (res: http.ServerResponse, filePath: string) => {
          // The precompressed twin (`x.js.br`) is named after the original.
          res.setHeader('Cache-Control', cacheControlFor(filePath.replace(/\.(br|gz)$/, '')));
        },
      },
    }),
  );
  // Single-page export: every non-API path gets the app shell; Expo Router takes it from there.
  const shell = path.join(webDir, 'index.html');
  app.get(/^(?!\/api\/).*/, (req, res, next) => {
    res.setHeader('Cache-Control', NEVER);
    const early = earlyDataLink(req.path, req.isAuthenticated?.() ?? false);
    if (early) res.setHeader('Link', early);
    const accepts = String(req.headers['accept-encoding'] ?? '');
    const br = /\bbr\b/.test(accepts) ? `${shell}.br` : null;
    const gz = /\bgzip\b/.test(accepts) ? `${shell}.gz` : null;
    const file = [br, gz].find((f) => f && fsExists(f));
    if (!file) return res.sendFile(shell, (err) => err && next(err));
    res.setHeader('Content-Encoding', file.endsWith('.br') ? 'br' : 'gzip');
    res.setHeader('Vary', 'Accept-Encoding');
    res.type('html');
    res.sendFile(file, (err) => err && next(err));
  });
}

/**
 * What a signed-in screen asks the API for first, by the page's path. The browser starts these requests
 * with the document (a `Link: rel=preload` header), so they travel while the scripts load and run instead
 * of waiting for the session check and then the route's chunk; the app's own `fetch` of the same URL takes
 * the preloaded answer. `crossorigin=use-credentials` matches the app's `credentials: 'include'`
 * (components/queries/api.ts), otherwise Chromium fetches twice.
 */
export const EARLY_DATA: ReadonlyArray<{ path: RegExp; api: readonly string[] }> = [{ path: /^\/floor\/?$/, api: ['/api/floor'] }];

/** The Link header for a page, or null: only for a signed-in visit (a stranger's request would be refused). */
export function earlyDataLink(pagePath: string, signedIn: boolean): string | null {
  if (!signedIn) return null;
  const api = ['/api/auth/me', ...(EARLY_DATA.find((e) => e.path.test(pagePath))?.api ?? [])];
  return api.map((u) => `<${u}>; rel=preload; as=fetch; crossorigin=use-credentials`).join(', ');
}

const exists = new Map<string, boolean>();
function fsExists(f: string): boolean {
  let e = exists.get(f);
  if (e === undefined) exists.set(f, (e = fs.existsSync(f)));
  return e;
}
