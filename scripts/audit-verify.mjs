#!/usr/bin/env node
// Re-checks an exported audit trail (JSON Lines, from the audit page) with no database and no
// Holdpoint code: each entry's hash is recomputed from its fields, each entry is checked to link
// to the one before it, and, given a signed checkpoint and Holdpoint's public key, the export is
// checked to extend what was signed.
//
//   npm run audit:verify -- audit-log.jsonl [--checkpoint checkpoint.json --public-key key.pem]
//
// The hash of an entry is SHA-256 over: the previous entry's hash, a line break, and the canonical
// JSON (object keys sorted at every level, no spaces) of the array
//   [tenant_id, seq, entity_type, entity_id, permit_id, action, from_state, to_state, actor_user_id,
//    actor_name, actor_role, membership_id, reason, ip, data, occurred_at]
// in UTF-8, occurred_at written as ISO-8601 UTC with milliseconds. The first entry's previous hash
// is the empty text. A checkpoint is { payload, signature, keyId }: payload is the canonical JSON of
// { hash, seq, tenant, time } and signature its Ed25519 signature, base64.
// Exit status: 0 all checks passed, 1 a check failed, 2 the files could not be read.
import { createHash, createPublicKey, verify } from 'node:crypto';
import { createReadStream, readFileSync } from 'node:fs';
import { createInterface } from 'node:readline';

function canonicalJson(value) {
  if (value === null || typeof value !== 'object') return JSON.stringify(value ?? null);
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  const entries = Object.entries(value)
    .filter(([, v]) => v !== undefined)
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`;
}

const FIELDS = ['tenant_id', 'seq', 'entity_type', 'entity_id', 'permit_id', 'action', 'from_state', 'to_state', 'actor_user_id', 'actor_name', 'actor_role', 'membership_id', 'reason', 'ip', 'data', 'occurred_at'];

function entryHash(e) {
  const values = FIELDS.map((f) => (f === 'seq' ? Number(e.seq) : f === 'occurred_at' ? new Date(e.occurred_at).toISOString() : e[f] ?? (f === 'data' ? {} : null)));
  return createHash('sha256').update(e.prev_hash).update('\n').update(Buffer.from(canonicalJson(values), 'utf8')).digest('hex');
}

function usage(message) {
  process.stderr.write(`${message}\nUsage: npm run audit:verify -- audit-log.jsonl [--checkpoint checkpoint.json --public-key key.pem]\n`);
  process.exit(2);
}

function readArgs(argv) {
  const args = { file: null, checkpoint: null, publicKey: null };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--checkpoint') args.checkpoint = argv[++i];
    else if (a === '--public-key') args.publicKey = argv[++i];
    else if (a.startsWith('--')) usage(`Unknown option ${a}.`);
    else if (!args.file) args.file = a;
    else usage(`Only one export file can be checked at a time (also given: ${a}).`);
  }
  if (!args.file) usage('Name the exported file to check.');
  if (Boolean(args.checkpoint) !== Boolean(args.publicKey)) usage('A checkpoint is checked with the public key: give both --checkpoint and --public-key.');
  return args;
}

function readCheckpoint(file, keyFile) {
  let cp;
  let key;
  try {
    cp = JSON.parse(readFileSync(file, 'utf8'));
  } catch (err) {
    usage(`The checkpoint file could not be read: ${err.message}`);
  }
  try {
    const text = readFileSync(keyFile, 'utf8');
    // The key as served by GET /api/audit/public-key ({ pem }) or as a plain PEM file.
    key = createPublicKey(text.trim().startsWith('{') ? JSON.parse(text).pem : text);
  } catch (err) {
    usage(`The public key could not be read: ${err.message}`);
  }
  if (typeof cp?.payload !== 'string' || typeof cp?.signature !== 'string') usage('The checkpoint file must hold "payload" and "signature".');
  const signed = verify(null, Buffer.from(cp.payload, 'utf8'), key, Buffer.from(cp.signature, 'base64'));
  let claim = null;
  try {
    claim = JSON.parse(cp.payload);
  } catch {
    claim = null;
  }
  return { signed, claim };
}

async function main() {
  const args = readArgs(process.argv.slice(2));
  const problems = [];
  const notes = [];
  const checkpoint = args.checkpoint ? readCheckpoint(args.checkpoint, args.publicKey) : null;
  if (checkpoint && !checkpoint.signed) problems.push('The checkpoint\'s signature does not verify with this public key: it was not signed by Holdpoint\'s key, or it was changed.');
  const claim = checkpoint?.signed ? checkpoint.claim : null;

  let lines;
  try {
    lines = createInterface({ input: createReadStream(args.file, 'utf8'), crlfDelay: Infinity });
  } catch (err) {
    usage(`The export could not be read: ${err.message}`);
  }
  let count = 0;
  let prev = null;
  let tenant = null;
  let firstSeq = null;
  let gaps = 0;
  let checkpointEntry = null;
  // Whether every entry from the checkpoint's to the last one read links to the one before it.
  let unbrokenSinceCheckpoint = true;
  let lineNo = 0;
  try {
    for await (const line of lines) {
      lineNo++;
      if (!line.trim()) continue;
      let e;
      try {
        e = JSON.parse(line);
      } catch {
        problems.push(`Line ${lineNo} is not JSON.`);
        continue;
      }
      const seq = Number(e.seq);
      count++;
      tenant ??= e.tenant_id;
      firstSeq ??= seq;
      if (e.tenant_id !== tenant) problems.push(`Entry ${seq} belongs to another tenant than the entries before it.`);
      if (entryHash(e) !== e.hash) problems.push(`Entry ${seq} was changed after it was written (its hash does not match its fields).`);
      if (prev) {
        if (seq <= prev.seq) problems.push(`Entry ${seq} comes after entry ${prev.seq}: the entries are out of order or repeated.`);
        else if (seq === prev.seq + 1) {
          if (e.prev_hash !== prev.hash) {
            problems.push(`Entry ${seq} does not link to entry ${prev.seq} (its previous hash is not that entry's hash).`);
            if (claim && prev.seq >= claim.seq) unbrokenSinceCheckpoint = false;
          }
        } else {
          gaps++;
          if (claim && prev.seq >= claim.seq) unbrokenSinceCheckpoint = false;
        }
      } else if (seq === 1 && e.prev_hash !== '') problems.push('Entry 1 has a previous hash, but the first entry of a chain has none.');
      if (claim && seq === claim.seq) checkpointEntry = e;
      prev = { seq, hash: e.hash };
    }
  } catch (err) {
    usage(`The export could not be read: ${err.message}`);
  }

  if (!count) notes.push('The export holds no entries.');
  if (gaps) notes.push(`The export skips entries in ${gaps} place(s) (a filtered export): links are checked only between neighbouring entries.`);
  if (claim) {
    if (tenant && claim.tenant !== tenant) problems.push('The checkpoint was signed for another tenant than the one this export comes from.');
    else if (claim.seq === 0) notes.push('The checkpoint was signed before the first entry; every entry extends it.');
    else if (!checkpointEntry) {
      if (prev && prev.seq < claim.seq) problems.push(`The export ends at entry ${prev.seq}, before the checkpoint's entry ${claim.seq}: a history that ends before what was signed does not extend it.`);
      else problems.push(`The export does not hold entry ${claim.seq}, the one the checkpoint signed, so it cannot be shown to extend it.`);
    } else if (checkpointEntry.hash !== claim.hash) {
      problems.push(`Entry ${claim.seq} differs from the one signed in the checkpoint at ${claim.time}: the history up to it was rewritten.`);
    } else if (!unbrokenSinceCheckpoint) {
      problems.push(`The entries after the checkpoint's entry ${claim.seq} do not all link to it, so the export cannot be shown to extend the checkpoint.`);
    } else {
      notes.push(`The export extends the checkpoint signed at ${claim.time} (entry ${claim.seq}).`);
      if (firstSeq === 1 && !gaps) notes.push(`The history from entry 1 to entry ${claim.seq} is the one that was signed.`);
    }
  }

  const range = count ? ` (entries ${firstSeq} to ${prev.seq})` : '';
  for (const n of notes) process.stdout.write(`${n}\n`);
  if (problems.length) {
    for (const p of problems) process.stdout.write(`PROBLEM: ${p}\n`);
    process.stdout.write(`Checked ${count} entries${range}: ${problems.length} problem(s) found.\n`);
    process.exit(1);
  }
  process.stdout.write(`Checked ${count} entries${range}: every hash and link is correct.\n`);
}

await main();
