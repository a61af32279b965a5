import { createHash, createPrivateKey, createPublicKey, sign, verify, type KeyObject } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import type { AuditCheckpoint, AuditPublicKey } from '@shared/types/audit';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { canonicalJson } from '../../lib/canonical-json';
import { enqueueMail } from '../../lib/mailer';
import type { ChainBreak } from './audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';

interface SigningKey {
  privateKey: KeyObject;
  publicPem: string;
  keyId: string;
}

const keys = new Map<string, SigningKey>();

/** The configured key, its public half and its id (the first 16 hex digits of the SHA-256 of the public key's DER form). */
export function signingKey(deps: Pick<AppDeps, 'config'>): SigningKey {
  const pem = deps.config.AUDIT_SIGNING_KEY;
  let key = keys.get(pem);
  if (!key) {
    const privateKey = createPrivateKey(pem);
    const publicKey = createPublicKey(privateKey);
    const der = publicKey.export({ type: 'spki', format: 'der' });
    key = { privateKey, publicPem: publicKey.export({ type: 'spki', format: 'pem' }).toString(), keyId: createHash('sha256').update(der).digest('hex').slice(0, 16) };
    keys.set(pem, key);
  }
  return key;
}

export function auditPublicKey(deps: Pick<AppDeps, 'config'>): AuditPublicKey {
  const k = signingKey(deps);
  return { keyId: k.keyId, algorithm: 'Ed25519', pem: k.publicPem };
}

/** The exact text a checkpoint signs: canonical JSON of { hash, seq, tenant, time }. */
export const checkpointPayload = (tenantId: string, seq: number, hash: string, time: Date) => canonicalJson({ hash, seq, tenant: tenantId, time: time.toISOString() });

interface CheckpointRow {
  id: string;
  tenant_id: string;
  seq: number;
  hash: string;
  signed_at: Date;
  reason: AuditCheckpoint['reason'];
  payload: string;
  signature: string;
  key_id: string;
}

const toCheckpoint = (r: CheckpointRow): AuditCheckpoint<Date> => ({
  id: r.id,
  tenantId: r.tenant_id,
  seq: Number(r.seq),
  hash: r.hash,
  signedAt: r.signed_at,
  reason: r.reason,
  payload: r.payload,
  signature: r.signature,
  keyId: r.key_id,
});

const CHECKPOINT_COLUMNS = 'id, tenant_id, seq, hash, signed_at, reason, payload, signature, key_id';

/** The checkpoint in words, as mailed and printed (the exact signed text travels in the checkpoint file and the printed QR code). */
export function checkpointText(c: AuditCheckpoint<Date | string>, timeZone: string): string {
  return [
    `Audit trail checkpoint: entry no. ${c.seq.toLocaleString('en-US')}, signed ${formatInZone(c.signedAt, timeZone)}`,
    `Hash: ${c.hash}`,
    `Signature (Ed25519, key ${c.keyId}): ${c.signature}`,
  ].join('\n');
}

/** The checkpoint as a file the verifier reads (`--checkpoint`). */
export const checkpointFile = (c: AuditCheckpoint<Date | string>) => ({ payload: c.payload, signature: c.signature, keyId: c.keyId });

/**
 * Signs the tenant's chain head as it stands in this transaction's snapshot, stores the checkpoint and
 * queues it by mail to the tenant's records address. When the head has not moved since the latest
 * checkpoint and `reuse` is set, that one is returned instead (a printed permit reprinted gives no new mail).
 */
export async function createCheckpoint(deps: AppDeps, tenantId: string, reason: AuditCheckpoint['reason'], reuse = true): Promise<AuditCheckpoint<Date>> {
  return withTenant(deps.sequelize, tenantId, async () => {
    const [head] = await deps.sequelize.query<{ seq: number; last_hash: string }>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = :tenantId`, {
      replacements: { tenantId },
      type: QueryTypes.SELECT,
    });
    const seq = head ? Number(head.seq) : 0;
    const hash = head?.last_hash ?? '';
    if (reuse) {
      const [latest] = await deps.sequelize.query<CheckpointRow>(`SELECT ${CHECKPOINT_COLUMNS} FROM audit_checkpoints WHERE tenant_id = :tenantId ORDER BY signed_at DESC, seq DESC LIMIT 1`, {
        replacements: { tenantId },
        type: QueryTypes.SELECT,
      });
      if (latest && Number(latest.seq) === seq && latest.hash === hash) return toCheckpoint(latest);
    }
    const key = signingKey(deps);
    const signedAt = deps.clock.now();
    const payload = checkpointPayload(tenantId, seq, hash, signedAt);
    const signature = sign(null, Buffer.from(payload, 'utf8'), key.privateKey).toString('base64');
    const [row] = await deps.sequelize.query<CheckpointRow>(
      `INSERT INTO audit_checkpoints (tenant_id, seq, hash, signed_at, reason, payload, signature, key_id)
       VALUES (:tenantId, :seq, :hash, :signedAt, :reason, :payload, :signature, :keyId) RETURNING ${CHECKPOINT_COLUMNS}`,
      { replacements: { tenantId, seq, hash, signedAt, reason, payload, signature, keyId: key.keyId }, type: QueryTypes.SELECT },
    );
    const checkpoint = toCheckpoint(row);
    const settings = await loadTenantSettings(deps.sequelize, tenantId);
    if (settings.recordsEmail) {
      await enqueueMail(deps.sequelize, {
        tenantId,
        to: settings.recordsEmail,
        subject: `Audit trail checkpoint: entry no. ${seq.toLocaleString('en-US')}`,
        text: [
          'Holdpoint signed the end of your audit trail. Keep this mail: it lets anyone check later that the trail was not rewritten before this point.',
          '',
          checkpointText(checkpoint, settings.timeZone),
          '',
          'Checkpoint file for the verifier (save as checkpoint.json):',
          JSON.stringify(checkpointFile(checkpoint)),
          '',
          `Public key (also at ${deps.config.PUBLIC_URL}/api/audit/public-key):`,
          signingKey(deps).publicPem,
        ].join('\n'),
        dedupeKey: `audit-checkpoint:${checkpoint.id}`,
      });
    }
    return checkpoint;
  });
}

/** The checkpoint a printed permit or dossier carries: the chain head signed now (or the latest checkpoint, when the head has not moved). */
export const checkpointForPrint = (deps: AppDeps, tenantId: string) => createCheckpoint(deps, tenantId, 'print');

export async function listCheckpoints(deps: AppDeps, caller: CallerContext, limit = 50): Promise<AuditCheckpoint<Date>[]> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'AuditEvent', { tenantId }, 'the audit trail');
  return withTenant(deps.sequelize, tenantId, async () => {
    const rows = await deps.sequelize.query<CheckpointRow>(`SELECT ${CHECKPOINT_COLUMNS} FROM audit_checkpoints WHERE tenant_id = :tenantId ORDER BY signed_at DESC, seq DESC LIMIT :limit`, {
      replacements: { tenantId, limit },
      type: QueryTypes.SELECT,
    });
    return rows.map(toCheckpoint);
  });
}

/**
 * The chain against every stored checkpoint: each must carry Holdpoint's signature over its own
 * fields, and the event it signed must still have the hash signed. Someone who can write the database
 * can rewrite the chain and recompute every hash, but cannot sign; a rewrite shows here (and, with the
 * mailed copy, in scripts/audit-verify.mjs even if the checkpoints here were removed too).
 */
export async function checkAgainstCheckpoints(deps: AppDeps, tenantId: string): Promise<ChainBreak[]> {
  const key = signingKey(deps);
  const publicKey = createPublicKey(key.privateKey);
  const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
  const rows = await deps.sequelize.query<CheckpointRow & { event_hash: string | null }>(
    `SELECT c.id, c.tenant_id, c.seq, c.hash, c.signed_at, c.reason, c.payload, c.signature, c.key_id, e.hash AS event_hash
     FROM audit_checkpoints c LEFT JOIN audit_events e ON e.tenant_id = c.tenant_id AND e.seq = c.seq
     WHERE c.tenant_id = :tenantId ORDER BY c.seq, c.signed_at`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const breaks: ChainBreak[] = [];
  for (const r of rows) {
    const seq = Number(r.seq);
    const when = formatInZone(r.signed_at, timeZone);
    const signed =
      r.key_id === key.keyId &&
      r.payload === checkpointPayload(tenantId, seq, r.hash, new Date(r.signed_at)) &&
      verify(null, Buffer.from(r.payload, 'utf8'), publicKey, Buffer.from(r.signature, 'base64'));
    if (!signed) breaks.push({ seq, problem: `the checkpoint signed ${when} does not carry Holdpoint's signature` });
    else if (seq > 0 && r.event_hash === null) breaks.push({ seq, problem: `the event signed in the checkpoint of ${when} is missing` });
    else if (seq > 0 && r.event_hash !== r.hash) breaks.push({ seq, problem: `the event differs from the one signed in the checkpoint of ${when}` });
  }
  return breaks;
}

/** A person asks for a checkpoint now (the auditor before an export, say). */
export async function requestCheckpoint(deps: AppDeps, caller: CallerContext): Promise<AuditCheckpoint<Date>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'verify_chain', 'AuditEvent', { tenantId }, 'the audit trail');
  return createCheckpoint(deps, tenantId, 'request', false);
}

/**
 * One round of the tenant-set interval (`auditCheckpointHours`, daily by default): each tenant whose
 * latest interval checkpoint is older than its interval gets a new one. Run by the elected worker round.
 */
export async function runCheckpointRound(deps: AppDeps): Promise<number> {
  const tenants = await deps.sequelize.query<{ id: string }>(`SELECT id FROM hp_tenant_ids() AS id`, { type: QueryTypes.SELECT });
  let made = 0;
  for (const { id: tenantId } of tenants) {
    try {
      const due = await withTenant(deps.sequelize, tenantId, async () => {
        const { auditCheckpointHours } = await loadTenantSettings(deps.sequelize, tenantId);
        const [last] = await deps.sequelize.query<{ signed_at: Date }>(
          `SELECT signed_at FROM audit_checkpoints WHERE tenant_id = :tenantId AND reason = 'interval' ORDER BY signed_at DESC LIMIT 1`,
          { replacements: { tenantId }, type: QueryTypes.SELECT },
        );
        return !last || deps.clock.now().getTime() - new Date(last.signed_at).getTime() >= auditCheckpointHours * 3_600_000;
      });
      if (!due) continue;
      await createCheckpoint(deps, tenantId, 'interval', false);
      made++;
    } catch (err) {
      deps.logger.warn({ err: (err as Error).message, tenantId }, 'audit checkpoint round failed for a tenant');
    }
  }
  return made;
}

const lastRound = new WeakMap<AppDeps, number>();

/** The worker's entry: a checkpoint round at most once a minute (the worker ticks every second). */
export async function runCheckpointTick(deps: AppDeps) {
  if (Date.now() - (lastRound.get(deps) ?? 0) < 60_000) return;
  lastRound.set(deps, Date.now());
  await runCheckpointRound(deps);
}
