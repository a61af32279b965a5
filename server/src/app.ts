import express, { Router } from 'express';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import expressStaticGzip from 'express-static-gzip';
import { existsSync } from 'node:fs';
import { join, resolve, sep } from 'node:path';
import { randomUUID } from 'node:crypto';
import type { AppDeps } from './deps';
import { errorHandler, notFoundApi } from './middleware/error-handler';
import { sessionMiddleware } from './middleware/session';
import { readYourWrites } from './lib/read-replica';
import { csrfProtection } from './middleware/csrf';
import { authenticate } from './middleware/authenticate';
import { idempotency } from './middleware/idempotency';
import { storableInput } from './middleware/validate';
import { createHealthRouter } from './modules/health/health.routes';
import { createAuthRouter, type AuthLimits } from './modules/auth/auth.routes';
import { featureRouters } from './modules';
import type { DevMailbox } from './modules/dev-mail/dev-mailbox';
import { createDevMailRouter } from './modules/dev-mail/dev-mail.routes';

export interface AppOptions {
  authLimits?: AuthLimits;
  devMailbox?: DevMailbox | null;
}

/** Builds the Express app without listening, so tests can start it on port 0. */
export function createApp(deps: AppDeps, options: AppOptions = {}) {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', deps.config.TRUST_PROXY.length ? deps.config.TRUST_PROXY : false);
  app.set('query parser', 'simple');

  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'"],
          connectSrc: ["'self'"],
          workerSrc: ["'self'"],
          manifestSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          upgradeInsecureRequests: deps.config.PUBLIC_URL.startsWith('https://') ? [] : null,
        },
      },
      strictTransportSecurity: deps.config.PUBLIC_URL.startsWith('https://'),
    }),
  );
  app.use(
    pinoHttp({
      logger: deps.logger,
      genReqId: (req) => (req.headers['x-request-id'] as string)?.slice(0, 64) || randomUUID(),
      autoLogging: { ignore: (req) => req.url?.startsWith('/api/health') === true || req.url?.startsWith('/assets/') === true },
      serializers: { req: (req) => ({ id: req.id, method: req.method, url: req.url }), res: (res) => ({ statusCode: res.statusCode }) },
    }),
  );

  const api = Router();
  // API answers hold personal and tenant data: no cache keeps them. The board (ETag, revalidated) and
  // file downloads set their own.
  api.use((_req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  api.use(express.json({ limit: '100kb', strict: true }));
  api.use(storableInput());
  api.use(createHealthRouter(deps));
  api.use(sessionMiddleware(deps));
  api.use(csrfProtection(deps.config.SESSION_SECRET));
  // After a change, this browser's reads skip the standby for a few seconds (lib/read-replica.ts).
  if (deps.replica) api.use(readYourWrites(deps.config.SESSION_SECRET));
  api.use(authenticate(deps));
  api.use(idempotency(deps));
  api.use(createAuthRouter(deps, options.authLimits));
  for (const make of featureRouters) api.use(make(deps));
  api.use(notFoundApi());
  app.use('/api', api);

  // The development mailbox shows mail with sign-in and reset links: only when switched on, never in production.
  if (options.devMailbox && deps.config.DEV_MAILBOX === 'on' && deps.config.NODE_ENV !== 'production') app.use('/dev/mail', createDevMailRouter(deps, options.devMailbox));

  const dist = resolve(deps.config.CLIENT_DIST);
  if (existsSync(join(dist, 'index.html'))) {
    // The build writes brotli and gzip files beside each text asset; they are sent as they are, by what the
    // browser accepts (Vary: Accept-Encoding). Hashed assets never change under their name; the page, the
    // service worker and the web app manifest are checked again each time, so a new version reaches the device.
    const assets = join(dist, 'assets') + sep;
    const alwaysCheck = /[\\/](index\.html|sw\.js|manifest\.webmanifest)(\.br|\.gz)?$/;
    app.use(
      expressStaticGzip(dist, {
        enableBrotli: true,
        orderPreference: ['br', 'gzip'],
        index: false,
        serveStatic: {
          index: false,
          maxAge: '1h',
          setHeaders: (res, path) => {
            if (path.startsWith(assets)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
            else if (alwaysCheck.test(path)) res.setHeader('Cache-Control', 'no-cache');
          },
        },
      }),
    );
    app.get('/{*splat}', (_req, res) => {
      res.setHeader('Cache-Control', 'no-cache');
      // Relative to its root: a build folder under a dot-folder (as a test's own build is) is still served.
      res.sendFile('index.html', { root: dist });
    });
  }
  app.use(errorHandler());
  return app;
}
