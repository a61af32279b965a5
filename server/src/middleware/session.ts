import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type { AppDeps } from '../deps';

export const SESSION_COOKIE = 'hp.sid';
export const SECURE_SESSION_COOKIE = '__Host-hp.sid';

export function sessionMiddleware({ config, pgPool }: AppDeps) {
  const PgStore = connectPgSimple(session);
  const secure = config.PUBLIC_URL.startsWith('https://');
  return session({
    name: secure ? SECURE_SESSION_COOKIE : SESSION_COOKIE,
    secret: config.SESSION_SECRET,
    store: new PgStore({ pool: pgPool, tableName: 'http_sessions', createTableIfMissing: false, pruneSessionInterval: 15 * 60, errorLog: () => undefined }),
    resave: false,
    saveUninitialized: false,
    rolling: false,
    proxy: secure,
    cookie: { httpOnly: true, sameSite: 'lax', secure, path: '/', maxAge: config.SESSION_ABSOLUTE_HOURS * 3600_000 },
  });
}
