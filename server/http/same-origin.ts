import type { Request, RequestHandler } from 'express';
import { forbidden } from './errors';

/** Methods that change nothing; every other method must come from the app's own pages. */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/** `scheme://host[:port]` with default ports dropped and lower case, or null when it is no http(s) origin. */
export function normaliseOrigin(value: string): string | null {
  try {
    const u = new URL(value);
    if (u.protocol !== 'http:' && u.protocol !== 'https:') return null;
    return u.origin.toLowerCase();
  } catch {
    return null;
  }
}

/** The origin this request was addressed to, as Express sees it (protocol and host follow `trust proxy`). */
export function targetOrigin(req: Request): string | null {
  const host = req.host;
  return host ? normaliseOrigin(`${req.protocol}://${host}`) : null;
}

/**
 * Refuses a state-changing request (POST, PUT, PATCH, DELETE, body-less and multipart alike) that a
 * browser sent from a page of another origin. SameSite=Lax alone let a page on another port of the
 * same host (same site, other origin) auto-submit a form with the admin's cookie (issue #18, point 2).
 *
 * Follows the OWASP Cross-Site Request Forgery Prevention Cheat Sheet, "Verifying Origin with
 * standard headers" and "Fetch Metadata headers":
 *  - Origin present: it must be the target origin (or one of EMBERLOT_PUBLIC_ORIGIN); `null`
 *    (sandboxed frames, privacy redirects) is refused.
 *  - no Origin, Referer present: the Referer's origin must match the same way.
 *  - neither, but `Sec-Fetch-Site` says cross-site or same-site: refused (a browser sent it).
 *  - neither header at all: allowed. Every current browser sends Origin on a cross-origin POST,
 *    PUT, PATCH or DELETE (fetch, XHR and form submission alike; Fetch standard, "append a request
 *    Origin header"), so a request without both comes from a non-browser client (curl, the bench,
 *    supertest, a lab script), which holds no victim's cookie to abuse. The cheat sheet leaves
 *    accept-or-block to the application; blocking would lock out API clients for no gain here.
 */
export function sameOriginGuard(publicOrigins: readonly string[] = []): RequestHandler {
  const extra = new Set(publicOrigins.map((o) => normaliseOrigin(o)).filter((o): o is string => !!o));
  return (req, _res, next) => {
    if (SAFE_METHODS.has(req.method)) return next();
    const own = targetOrigin(req);
    const allowed = (o: string | null) => !!o && (o === own || extra.has(o));
    const origin = req.get('origin');
    if (origin !== undefined) {
      if (allowed(normaliseOrigin(origin))) return next();
      return next(refused(origin.slice(0, 200), own));
    }
    const referer = req.get('referer');
    if (referer !== undefined) {
      if (allowed(normaliseOrigin(referer))) return next();
      return next(refused(normaliseOrigin(referer) ?? 'an unreadable Referer', own));
    }
    const site = req.get('sec-fetch-site');
    if (site === 'cross-site' || site === 'same-site') return next(refused(`a ${site} page`, own));
    next();
  };
}

function refused(from: string, own: string | null) {
  return forbidden(
    `Cross-site request refused: changes are only accepted from Emberlot's own pages (${own ?? 'this server'}), not from ${from}.`,
  );
}
