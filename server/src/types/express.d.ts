import 'express-session';
import type { Actor, AppAbility } from '@shared/abilities/define-ability';

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
    }
  }
}

export {};
