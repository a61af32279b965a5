import type { TestProject } from 'vitest/node';
import { fileURLToPath } from 'node:url';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { startTestDatabase } from '../../scripts/lib/test-db.mjs';

declare module 'vitest' {
  export interface ProvidedContext {
    dbAdminUrl: string;
    dbTemplate: string;
    dbAppRole: { role: string; password: string };
  }
}

/** One throwaway cluster per test run; each test file copies the seeded template database. */
export default async function setup(project: TestProject) {
  const root = fileURLToPath(new URL('../..', import.meta.url));
  const db = await startTestDatabase(root);
  project.provide('dbAdminUrl', db.adminUrl);
  project.provide('dbTemplate', 'holdpoint_template');
  project.provide('dbAppRole', db.appRole);
  return () => db.stop();
}
