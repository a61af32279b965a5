import session, { type SessionData } from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import type { Request } from 'express';
import type { AppDeps } from '../deps';

export const SESSION_COOKIE = 'hp.sid';
export const SECURE_SESSION_COOKIE = '__Host-hp.sid';

/** How many versions read with a session may wait for their request at once (one per session at most). */
const MAX_PENDING_VERSIONS = 10_000;

export function sessionMiddleware({ config, pgPool }: AppDeps) {
  const PgStore = connectPgSimple(session);

  /**
   * Reads the session and its person's access version (users.access_version) in one statement, so
   * the access kept in memory can be checked without a second one. No touch: the cookie's expiry is
   * absolute (not rolling) and the idle and absolute timeouts are enforced in authenticate.
   */
  class AccessVersionStore extends PgStore {
    private versions = new Map<string, number | null>();

    override get(sid: string, callback: (err: unknown, session?: SessionData | null) => void) {
      pgPool
        .query<{ sess: SessionData | string; access_version: string | number | null }>(
          `SELECT s.sess, u.access_version FROM http_sessions s LEFT JOIN users u ON u.id = (s.sess->>'userId')::uuid
           WHERE s.sid = $1 AND s.expire >= now()`,
          [sid],
        )
        .then(
          ({ rows }) => {
            const row = rows[0];
            if (!row) return callback(null, null);
            if (this.versions.size >= MAX_PENDING_VERSIONS) this.versions.clear();
            this.versions.set(sid, row.access_version === null ? null : Number(row.access_version));
            callback(null, typeof row.sess === 'string' ? (JSON.parse(row.sess) as SessionData) : row.sess);
          },
          (err: unknown) => callback(err),
        );
    }

    /** The access version read with this request's session (null: none, or the account is gone). */
    takeAccessVersion(sid: string): number | null {
      const v = this.versions.get(sid);
      this.versions.delete(sid);
      return v ?? null;
    }
  }

  const secure = config.PUBLIC_URL.startsWith('https://');
  return session({
    name: secure ? SECURE_SESSION_COOKIE : SESSION_COOKIE,
    secret: config.SESSION_SECRET,
    store: new AccessVersionStore({ pool: pgPool, tableName: 'http_sessions', createTableIfMissing: false, pruneSessionInterval: 15 * 60, errorLog: () => undefined, disableTouch: true }),
    resave: false,
    saveUninitialized: false,
    rolling: false,
    proxy: secure,
    cookie: { httpOnly: true, sameSite: 'lax', secure, path: '/', maxAge: config.SESSION_ABSOLUTE_HOURS * 3600_000 },
  });
}

/** The access version the session store read with this request's session. */
export function accessVersionOf(req: Request): number | null {
  const store = req.sessionStore as unknown as { takeAccessVersion?: (sid: string) => number | null };
  return store?.takeAccessVersion && req.sessionID ? store.takeAccessVersion(req.sessionID) : null;
}
