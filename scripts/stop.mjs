// `npm run stop`: stops the PostgreSQL cluster that `npm start` runs under .data/pg.
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { stopCluster } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
console.log(stopCluster(join(root, '.data', 'pg')) ? 'PostgreSQL stopped.' : 'PostgreSQL was not running.');
