// The two floors of `npm run bench`: what this machine answers with nothing of Holdpoint in the way.
//   GET /bare     a bare node:http server writing a fixed JSON answer
//   GET /select1  the same, after one `SELECT 1` through a pg pool (10 connections, as the server's)
// Each request of the product is compared with these, measured in the same run.
//   DATABASE_URL=… PORT=… node bench/floors.mjs
import { createServer } from 'node:http';
import pg from 'pg';

const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 10 });
const body = '{"ok":true}';

const server = createServer((req, res) => {
  const send = (text) => {
    res.writeHead(200, { 'content-type': 'application/json', 'content-length': Buffer.byteLength(text) });
    res.end(text);
  };
  if (req.url === '/bare') return send(body);
  if (req.url === '/select1') {
    pool.query('SELECT 1 AS one').then(
      ({ rows }) => send(`{"ok":${rows[0].one === 1}}`),
      () => {
        res.writeHead(503);
        res.end();
      },
    );
    return;
  }
  res.writeHead(404);
  res.end();
});
server.listen(Number(process.env.PORT ?? 0), '127.0.0.1');
process.on('SIGTERM', () => process.exit(0));
