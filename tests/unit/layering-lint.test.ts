import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { ESLint } from 'eslint';

// Finding 5: the layering is kept by lint rules in the project's own ESLint config. These run that
// config on small snippets (the paths need not exist) so a rule that stops firing fails here.
const root = fileURLToPath(new URL('../..', import.meta.url));
let eslint: ESLint;

beforeAll(() => {
  eslint = new ESLint({ cwd: root, overrideConfigFile: 'eslint.config.js' });
});

async function ruleIds(code: string, filePath: string) {
  const [result] = await eslint.lintText(code, { filePath });
  return result.messages.map((m) => m.ruleId ?? `fatal: ${m.message}`);
}

const routeFile = 'server/src/modules/sample/sample.routes.ts';

describe('finding 5: route handlers do not open transactions', () => {
  it('when a route handler calls withTenant imported from the db layer, then both the import and the call are refused', async () => {
    const code = `import { Router } from 'express';
import { withTenant } from '../../db/sequelize';
export function createSampleRouter(deps: { sequelize: never }) {
  const router = Router();
  router.get('/sample', async (_req, res) => {
    res.json(await withTenant(deps.sequelize, 't', async () => 1));
  });
  return router;
}
`;
    const ids = await ruleIds(code, routeFile);
    expect(ids).toContain('no-restricted-imports');
    expect(ids).toContain('no-restricted-syntax');
  });

  it('when a route handler opens sequelize.transaction itself, then it is refused', async () => {
    const code = `import { Router } from 'express';
export function createSampleRouter(deps: { sequelize: { transaction: (fn: () => Promise<number>) => Promise<number> } }) {
  const router = Router();
  router.post('/sample', async (_req, res) => {
    res.json(await deps.sequelize.transaction(async () => 1));
  });
  return router;
}
`;
    expect(await ruleIds(code, routeFile)).toEqual(['no-restricted-syntax']);
  });

  it('when a route handler parses, calls a service and responds, then nothing is reported', async () => {
    const code = `import { Router } from 'express';
import { z } from 'zod';
import { parse } from '../../middleware/validate';
import { doSample } from './sample.service';
export function createSampleRouter(deps: object) {
  const router = Router();
  router.post('/sample', async (req, res) => {
    res.status(201).json(await doSample(deps, parse(z.object({ n: z.number() }), req.body, 'sample')));
  });
  return router;
}
`;
    expect(await ruleIds(code, routeFile)).toEqual([]);
  });

  it('when a service file opens the transaction, then nothing is reported', async () => {
    const code = `import { withTenant } from '../../db/sequelize';
export const doSample = (deps: { sequelize: never }, tenantId: string) => withTenant(deps.sequelize, tenantId, async () => 1);
`;
    expect(await ruleIds(code, 'server/src/modules/sample/sample.service.ts')).toEqual([]);
  });
});

describe('finding 5: client features meet only through public indexes', () => {
  it("when a feature imports a file deep inside another feature, then it is refused", async () => {
    const code = `import { useMe } from '@client/features/auth/api/get-me';
export const useName = () => useMe().data?.user.name;
`;
    expect(await ruleIds(code, 'client/src/features/permits/hooks/use-name.ts')).toEqual(['no-restricted-imports']);
  });

  it('when a feature reaches into another feature by a relative path, then it is refused at any depth', async () => {
    const shallow = `import { useMe } from '../auth/api/get-me';\nexport const x = useMe;\n`;
    const deep = `import { useMe } from '../../../auth/api/get-me';\nexport const x = useMe;\n`;
    expect(await ruleIds(shallow, 'client/src/features/attachments/x.ts')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(deep, 'client/src/features/permits/components/permit-form/x.ts')).toEqual(['no-restricted-imports']);
  });

  it("when a feature imports another feature's public index, or its own files by relative path, then nothing is reported", async () => {
    const code = `import { useMe } from '@client/features/auth';
import { usePermitPipelines } from '../../api/get-pipelines';
import { Button } from '@client/components/ui/button';
export const parts = [useMe, usePermitPipelines, Button];
`;
    expect(await ruleIds(code, 'client/src/features/permits/components/permit-form/x.tsx')).toEqual([]);
  });

  it('when the app shell imports a page of a feature, then nothing is reported (only features are kept apart)', async () => {
    const code = `import { PermitPage } from '@client/features/permits/pages/permit-page';\nexport const pages = [PermitPage];\n`;
    expect(await ruleIds(code, 'client/src/app/sample-routes.tsx')).toEqual([]);
  });
});
