import type { Router } from 'express';
import type { AppDeps } from '../deps';
import { createAdminRouter } from './admin/admin.routes';
import { createCalcRouter } from './calc/calc.routes';
import { createPermitsRouter } from './permits/permits.routes';
import { createAuditRouter } from './audit/audit.routes';
import { createIsolationsRouter } from './isolations/isolations.routes';
import { createAssetsRouter } from './assets/assets.routes';
import { createAttachmentsRouter } from './attachments/attachments.routes';
import { createGasTestsRouter } from './gas-tests/gas-tests.routes';
import { createCrewRouter } from './crew/crew.routes';
import { createCertificatesRouter } from './certificates/certificates.routes';
import { createLabelsRouter } from './assets/labels.routes';
import { createLiveRouter } from './live/live.routes';
import { createMyWorkRouter } from './my-work/my-work.routes';
import { createDossierRouter } from './dossier/dossier.routes';
import { createPlanRouter } from './plan/plan.routes';
import { createReportsRouter } from './reports/reports.routes';
import { createTenantSettingsRouter } from './tenants/tenant-settings.routes';

/** Every feature's router, mounted under /api after sign-in checks. Add one line per feature. */
export const featureRouters: Array<(deps: AppDeps) => Router> = [createAdminRouter, createCalcRouter, createPermitsRouter, createIsolationsRouter, createAuditRouter, createAssetsRouter, createAttachmentsRouter, createGasTestsRouter, createCrewRouter, createCertificatesRouter, createMyWorkRouter, createLiveRouter, createLabelsRouter, createDossierRouter, createPlanRouter, createReportsRouter, createTenantSettingsRouter];
