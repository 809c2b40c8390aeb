import express, { type Request, type Response } from 'express';
import type { ZodType } from 'zod';
import type { Role } from '../../shared/roles';
import type { SessionUser } from '../../shared/schemas/auth';
import { badRequest, forbidden, unauthenticated, validationError } from './errors';

export type Access = readonly Role[] | 'public' | 'signed-in';

export interface RouteSpec<P, Q, B> {
  /** Who may call it. Every route must say; the access test walks this list. */
  access: Access;
  params?: ZodType<P>;
  query?: ZodType<Q>;
  body?: ZodType<B>;
  /** Status for a successful response with a body (default 200). */
  status?: number;
}

export interface Ctx<P, Q, B> {
  user: SessionUser;
  params: P;
  query: Q;
  body: B;
  req: Request;
  res: Response;
}

/** Return this from a handler that wrote the response itself (files, streams). */
export const HANDLED = Symbol('handled');

export interface RegisteredRoute {
  method: 'get' | 'post' | 'patch' | 'put' | 'delete';
  path: string;
  access: Access;
}

export const SESSION_COOKIE = 'emberlot.sid';

/**
 * A NUL character (PostgreSQL text and jsonb cannot hold it) or a lone UTF-16 surrogate (not valid
 * unicode; jsonb refuses its escape). Such input used to reach the database and come back as a 500.
 */
const UNSTORABLE = /\u0000|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

/**
 * The path of the first string (value or key) holding an unstorable character, or null. Iterative,
 * so a deeply nested body cannot overflow the stack.
 */
export function findUnstorable(root: unknown): string | null {
  type Node = { v: unknown; key: string; parent: Node | null };
  const pathOf = (n: Node) => {
    const parts: string[] = [];
    for (let x: Node | null = n; x?.parent; x = x.parent) parts.unshift(x.key);
    return parts.length ? parts.join('.') : '_';
  };
  const stack: Node[] = [{ v: root, key: '', parent: null }];
  while (stack.length) {
    const n = stack.pop()!;
    if (typeof n.v === 'string') {
      if (UNSTORABLE.test(n.v)) return pathOf(n);
    } else if (n.v && typeof n.v === 'object') {
      for (const [k, v] of Object.entries(n.v)) {
        const child = { v, key: k, parent: n };
        if (UNSTORABLE.test(k)) return pathOf(child);
        stack.push(child);
      }
    }
  }
  return null;
}

export function requireAccess(req: Request, access: Access): SessionUser {
  const user = req.user;
  // A public route may have nobody signed in; none of their handlers reads ctx.user.
  // eslint-disable-next-line emberlot/no-contract-cast -- Ctx is not typed per access level (yet)
  if (access === 'public') return user as SessionUser;
  if (!user) {
    const hadCookie = (req.headers.cookie ?? '').includes(`${SESSION_COOKIE}=`);
    throw unauthenticated(hadCookie ? 'Your session has ended. Sign in again.' : 'Sign in first.');
  }
  if (access !== 'signed-in' && !access.includes(user.role)) {
    throw forbidden(`This needs the ${access.join(' or ')} role; you are signed in as ${user.role}.`);
  }
  return user;
}

/**
 * An Express router whose every route declares its access and zod schemas. Handlers get parsed
 * input and return the response body (undefined → 204). The declared list is what the
 * role × route test walks, so a route added without this wrapper fails that test.
 */
export class ApiRouter {
  readonly router = express.Router();
  readonly routes: RegisteredRoute[] = [];
  constructor(readonly prefix: string) {}

  private add<P, Q, B>(method: RegisteredRoute['method'], path: string, spec: RouteSpec<P, Q, B>, handler: (ctx: Ctx<P, Q, B>) => unknown) {
    this.routes.push({ method, path: this.prefix + path, access: spec.access });
    this.router[method](path, async (req, res, next) => {
      try {
        const user = requireAccess(req, spec.access);
        const parse = <T>(schema: ZodType<T> | undefined, data: unknown, where: string): T => {
          if (!schema) return undefined as T;
          const bad = findUnstorable(data);
          if (bad) {
            const message = 'Contains a NUL character or a broken unicode character (lone surrogate)';
            throw badRequest(`The ${where} is not valid (${bad === '_' ? message : `${bad}: ${message}`}).`, { [bad]: [message] });
          }
          const r = schema.safeParse(data);
          if (!r.success) throw validationError(r.error, where);
          return r.data;
        };
        const params = parse(spec.params, req.params, 'address');
        const query = parse(spec.query, req.query, 'query');
        const body = parse(spec.body, req.body ?? {}, 'request body');
        res.locals.query = query;
        const out = await handler({ user, params, query, body, req, res });
        if (out === HANDLED || res.headersSent) return;
        if (out === undefined) res.status(204).end();
        else res.status(spec.status ?? 200).json(out);
      } catch (err) {
        next(err);
      }
    });
  }

  get<P = unknown, Q = unknown>(path: string, spec: RouteSpec<P, Q, unknown>, h: (ctx: Ctx<P, Q, unknown>) => unknown) {
    this.add('get', path, spec, h);
  }
  post<P = unknown, Q = unknown, B = unknown>(path: string, spec: RouteSpec<P, Q, B>, h: (ctx: Ctx<P, Q, B>) => unknown) {
    this.add('post', path, spec, h);
  }
  patch<P = unknown, Q = unknown, B = unknown>(path: string, spec: RouteSpec<P, Q, B>, h: (ctx: Ctx<P, Q, B>) => unknown) {
    this.add('patch', path, spec, h);
  }
  put<P = unknown, Q = unknown, B = unknown>(path: string, spec: RouteSpec<P, Q, B>, h: (ctx: Ctx<P, Q, B>) => unknown) {
    this.add('put', path, spec, h);
  }
  delete<P = unknown, Q = unknown, B = unknown>(path: string, spec: RouteSpec<P, Q, B>, h: (ctx: Ctx<P, Q, B>) => unknown) {
    this.add('delete', path, spec, h);
  }
}
