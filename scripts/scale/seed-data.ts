// `DATABASE_URL=… node --import tsx scripts/scale/seed-data.ts [--factor 0.1] [--verify]`, run by
// `npm run seed:scale`: builds the scale dataset (scripts/scale/build-dataset.ts) with a progress bar,
// then, with --verify, recomputes the tenant's whole audit chain. Exit 3: the dataset was already there.
import { createSequelize } from '../../server/src/db/sequelize';
import { verifyChain } from '../../server/src/modules/audit/audit.service';
import { buildScaleDataset } from './build-dataset';

const argv = process.argv.slice(2);
const factorAt = argv.indexOf('--factor');
const factor = factorAt >= 0 ? Number(argv[factorAt + 1]) : 1;
const url = process.env.DATABASE_URL;

async function main() {
  if (!url) throw new Error('DATABASE_URL is not set.');
  if (!(factor > 0)) throw new Error('--factor takes a number above 0.');
  const result = await buildScaleDataset(url, { factor, progress: true });
  if (!result.built) {
    console.error('[seed:scale] this database already holds the scale dataset; run `npm run seed:scale -- --fresh` to rebuild it.');
    process.exit(3);
  }
  const counts = Object.entries(result.counts).map(([k, v]) => `${v.toLocaleString('en-US')} ${k.replace('_', ' ')}`);
  const cpu = process.cpuUsage();
  const shares = [`${((cpu.user + cpu.system) / 1e6).toFixed(1)} s of CPU in this process`];
  if (result.databaseCpuSeconds != null) shares.push(`${result.databaseCpuSeconds.toFixed(1)} s in PostgreSQL's writing sessions`);
  console.log(`[seed:scale] Bramblecote now holds ${counts.join(', ')}; written in ${result.seconds.toFixed(1)} s (${shares.join(', ')})`);
  if (argv.includes('--verify')) {
    const started = Date.now();
    const sequelize = createSequelize(url);
    const report = await verifyChain(sequelize, result.tenantId);
    await sequelize.close();
    const took = ((Date.now() - started) / 1000).toFixed(1);
    console.log(`[seed:scale] audit chain: ${report.ok ? 'intact' : `BROKEN at ${report.brokenAtSeq}: ${report.problem}`} (${report.events.toLocaleString('en-US')} events checked in ${took} s)`);
    if (!report.ok) process.exitCode = 1;
  }
}

main().catch((err) => {
  console.error(`\n[seed:scale] failed: ${(err as Error).message}`);
  process.exit(1);
});
