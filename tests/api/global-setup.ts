import type { TestProject } from 'vitest/node';
import { fileURLToPath } from 'node:url';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import S3rver from 's3rver';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { startTestDatabase } from '../../scripts/lib/test-db.mjs';

declare module 'vitest' {
  export interface ProvidedContext {
    dbAdminUrl: string;
    dbTemplate: string;
    dbAppRole: { role: string; password: string };
    /** The local S3 fake's address; its bucket is S3_TEST_BUCKET (see tests/fixtures/test-server.ts s3Env). */
    s3Url: string;
  }
}

/** One throwaway cluster per test run; each test file copies the seeded template database. */
export default async function setup(project: TestProject) {
  const root = fileURLToPath(new URL('../..', import.meta.url));
  const db = await startTestDatabase(root);
  project.provide('dbAdminUrl', db.adminUrl);
  project.provide('dbTemplate', 'holdpoint_template');
  project.provide('dbAppRole', db.appRole);
  // The local S3 fake, as smtp-tester is for mail: one per run, a bucket every test file may use.
  const s3Dir = mkdtempSync(join(tmpdir(), 'holdpoint-test-s3-'));
  const s3 = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory: s3Dir, configureBuckets: [{ name: 'holdpoint-test', configs: [] }] });
  const { port } = await s3.run();
  project.provide('s3Url', `http://127.0.0.1:${port}`);
  return async () => {
    await s3.close().catch(() => undefined);
    rmSync(s3Dir, { recursive: true, force: true });
    await db.stop();
  };
}
