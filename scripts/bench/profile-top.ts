// The top of a flame graph by self time, from the V8 CPU profiles `node --cpu-prof` writes
// (`BENCH_CPU_PROF=on npm run bench`, or scripts/bench/profile.ts). All profiles in a folder are added up.
//   node --import tsx scripts/bench/profile-top.ts <folder> [how many, default 5]
import { readdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';

interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string; lineNumber: number };
}
interface Profile {
  nodes: ProfileNode[];
  samples: number[];
  timeDeltas: number[];
}

export interface SelfTime {
  name: string;
  where: string;
  ms: number;
  share: number;
}

const root = resolve(import.meta.dirname, '../..');

function where(url: string, line: number) {
  if (!url) return '';
  const path = url.replace(/^file:\/\//, '');
  const pkg = /\/node_modules\/((?:@[^/]+\/)?[^/]+)\/(.*)$/.exec(path);
  const short = pkg ? `${pkg[1]}: ${pkg[2]}` : path.startsWith(root) ? path.slice(root.length + 1) : path;
  return `${short}:${line + 1}`;
}

export function topSelfTime(dir: string, count = 5): { total: number; top: SelfTime[] } {
  const byKey = new Map<string, SelfTime>();
  let total = 0;
  for (const file of readdirSync(dir).filter((f) => f.endsWith('.cpuprofile'))) {
    const p = JSON.parse(readFileSync(join(dir, file), 'utf8')) as Profile;
    const nodes = new Map(p.nodes.map((n) => [n.id, n]));
    p.samples.forEach((id, i) => {
      const n = nodes.get(id);
      if (!n || n.callFrame.functionName === '(idle)') return;
      const us = p.timeDeltas[i] ?? 0;
      const name = n.callFrame.functionName || '(anonymous)';
      const at = where(n.callFrame.url, n.callFrame.lineNumber);
      const key = `${name}@${at}`;
      const e = byKey.get(key) ?? { name, where: at, ms: 0, share: 0 };
      e.ms += us / 1000;
      total += us / 1000;
      byKey.set(key, e);
    });
  }
  const top = [...byKey.values()].sort((a, b) => b.ms - a.ms).slice(0, count).map((e) => ({ ...e, share: e.ms / total }));
  return { total, top };
}

if (process.argv[1] && resolve(process.argv[1]) === resolve(import.meta.filename)) {
  const dir = process.argv[2];
  if (!dir) throw new Error('Name the folder of .cpuprofile files.');
  const { total, top } = topSelfTime(resolve(dir), Number(process.argv[3] ?? 5));
  console.log(`busy ${(total / 1000).toFixed(1)} s of CPU (idle left out); by self time:`);
  for (const [i, e] of top.entries()) console.log(`  ${i + 1}. ${(e.share * 100).toFixed(1).padStart(5)} %  ${e.name}  ${e.where}`);
}
