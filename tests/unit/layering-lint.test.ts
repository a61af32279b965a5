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

describe('finding 5: the audit routes are layered like every other route', () => {
  it('when the audit routes are linted, then the route rules apply to them and find nothing', async () => {
    const file = 'server/src/modules/audit/audit.routes.ts';
    const config = await eslint.calculateConfigForFile(file);
    expect(config.rules['no-restricted-syntax']?.[0], 'the route rules are not switched off for the audit routes').toBe(2);
    const [result] = await eslint.lintFiles([file]);
    expect(result.messages).toEqual([]);
  }, 30_000);
});

describe('finding 6: imports run one way, from features to the shared parts', () => {
  it('when a file of the database layer imports a feature module or the demo, then it is refused', async () => {
    const feature = `import { createPermit } from '../modules/permits/permits.service';\nexport const x = createPermit;\n`;
    const demo = `import { seedDemo } from '../demo';\nexport const x = seedDemo;\n`;
    const deep = `import { loadActor } from '../../modules/auth/auth.repository';\nexport const x = loadActor;\n`;
    expect(await ruleIds(feature, 'server/src/db/cli.ts')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(demo, 'server/src/db/cli.ts')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(deep, 'server/src/db/migrations/0999-sample.ts')).toEqual(['no-restricted-imports']);
  });

  it('when the server lib or a middleware imports a feature module, then it is refused', async () => {
    const code = `import { loadActor } from '../modules/auth/auth.repository';\nexport const x = loadActor;\n`;
    expect(await ruleIds(code, 'server/src/middleware/authenticate.ts')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(code, 'server/src/lib/sample.ts')).toEqual(['no-restricted-imports']);
  });

  it('when the demo or a feature imports the database layer and the lib, or the demo drives a feature, then nothing is reported', async () => {
    const demo = `import { migrateUp } from '../db/migrator';
import { loadActor } from '../lib/actor';
import { createPermit } from '../modules/permits/permits.service';
export const parts = [migrateUp, loadActor, createPermit];
`;
    expect(await ruleIds(demo, 'server/src/demo/cli.ts')).toEqual([]);
    const db = `import { createSequelize } from './sequelize';\nimport { migrateUp } from './migrator';\nexport const parts = [createSequelize, migrateUp];\n`;
    expect(await ruleIds(db, 'server/src/db/cli.ts')).toEqual([]);
  });

  it("when the client's shared code imports a feature, by alias or by relative path, then it is refused", async () => {
    const alias = `import { useMe } from '@client/features/auth/api/get-me';\nexport const x = useMe;\n`;
    const index = `import { useMe } from '@client/features/auth';\nexport const x = useMe;\n`;
    const relative = `import { useMe } from '../features/auth/api/get-me';\nexport const x = useMe;\n`;
    expect(await ruleIds(alias, 'client/src/lib/ability.tsx')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(index, 'client/src/lib/ability.tsx')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(relative, 'client/src/lib/ability.tsx')).toEqual(['no-restricted-imports']);
    expect(await ruleIds(index, 'client/src/components/ui/sample.tsx')).toEqual(['no-restricted-imports']);
  });

  it('when the real shared files are linted, then none of them imports a feature', async () => {
    const importsOnly = new ESLint({ cwd: root, overrideConfigFile: 'eslint.config.js', ruleFilter: ({ ruleId }) => ruleId === 'no-restricted-imports' });
    const results = await importsOnly.lintFiles(['server/src/db', 'server/src/lib', 'server/src/middleware', 'client/src/lib', 'client/src/components']);
    const refused = results.flatMap((r) => r.messages.map((m) => `${r.filePath}: ${m.message}`));
    expect(results.length).toBeGreaterThan(20);
    expect(refused).toEqual([]);
  }, 60_000);
});
