import type { Router } from 'express';
import type { AppDeps } from '../deps';
import { createAdminRouter } from './admin/admin.routes';

/** Every feature's router, mounted under /api after sign-in checks. Add one line per feature. */
export const featureRouters: Array<(deps: AppDeps) => Router> = [createAdminRouter];
