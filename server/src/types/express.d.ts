import 'express-session';
import type { Actor, AppAbility } from '@shared/abilities/define-ability';
import type { SessionAccess } from '../lib/access-cache';

declare module 'express-session' {
  interface SessionData {
    userId: string;
    tenantId: string | null;
    createdAt: number;
    lastSeenAt: number;
  }
}

declare global {
  namespace Express {
    interface Request {
      actor?: Actor;
      ability?: AppAbility;
      user?: { id: string; email: string; name: string };
      /** The signed-in person's access as kept for this session (set by authenticate). */
      access?: SessionAccess;
    }
  }
}

export {};
