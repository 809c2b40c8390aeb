import express, { type Express } from 'express';
import * as fs from 'node:fs';
import * as http from 'node:http';
import * as path from 'node:path';
import helmet from 'helmet';
import type { AppContext } from './context';
import { errorHandler, notFound } from './http/errors';
import { sameOriginGuard } from './http/same-origin';
import type { ApiRouter, RegisteredRoute } from './http/route';
import { installAuth } from './modules/auth/auth.routes';
import { installApiCompression, installWebApp } from './http/web-static';
import { apiRouters } from './modules';

export const JSON_BODY_LIMIT = '1mb';

export interface BuiltApp {
  app: Express;
  routes: RegisteredRoute[];
  routers: ApiRouter[];
}

/** The Express app: security headers, sessions, every /api router, the web export, one error handler. */
export function createApp(ctx: AppContext): BuiltApp {
  const app = express();
  app.disable('x-powered-by');
  // EMBERLOT_TRUST_PROXY (default off): req.ip, req.protocol and req.host then follow the proxy's
  // X-Forwarded-* headers, so secure cookies work behind a TLS proxy and the sign-in limiter keys
  // on each client's address instead of the proxy's.
  app.set('trust proxy', ctx.config.trustProxy);
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          // react-native-web writes styles at run time; the export's scripts are same-origin files.
          styleSrc: ["'self'", "'unsafe-inline'"],
          scriptSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
  );
  // Before any body is read or session touched: a change sent from another origin's page is refused.
  app.use(sameOriginGuard(ctx.config.publicOrigins));
  installApiCompression(app);
  app.use('/api', express.json({ limit: JSON_BODY_LIMIT }));
  app.use('/api', (_req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  installAuth(app, ctx);

  const routes: RegisteredRoute[] = [];
  const routers = apiRouters(ctx);
  for (const r of routers) {
    app.use(r.prefix, r.router);
    routes.push(...r.routes);
  }
  app.use('/api', (req, _res, next) => next(notFound(`The API route ${req.method} ${req.originalUrl}`)));

  const devProxy = process.env.EMBERLOT_DEV_PROXY;
  if (devProxy) {
    // `npm run dev`: everything that is not /api goes to the Expo dev server, so the app and the
    // API still share one origin and the session cookie just works.
    const target = new URL(devProxy);
    app.use((req, res, next) => {
      if (req.path.startsWith('/api/')) return next();
      const upstream = http.request(
        { host: target.hostname, port: target.port, path: req.originalUrl, method: req.method, headers: req.headers },
        (up) => {
          res.writeHead(up.statusCode ?? 502, up.headers);
          up.pipe(res);
        },
      );
      upstream.on('error', () => res.status(502).type('text').send('The Expo dev server is not up yet; reload in a moment.'));
      req.pipe(upstream);
    });
  }

  const webDir = ctx.config.webDir;
  if (webDir && fs.existsSync(path.join(webDir, 'index.html'))) {
    installWebApp(app, webDir);
  }
  app.use(errorHandler);
  return { app, routes, routers };
}
