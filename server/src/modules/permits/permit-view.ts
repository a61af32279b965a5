import { QueryTypes, type Sequelize } from 'sequelize';
import type { PermitDetail, PermitSignature, PermitTimelineEvent } from '@shared/types/permits';
import { liveStates } from '@shared/permit/states';
import { nextGasTestDue } from '@shared/permit/due-times';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeRecord } from '../../lib/authorize';
import { findPermit, type PermitRow } from './permits.repository';
import type { CallerContext } from '../../lib/caller';
import { availableActions } from './permits.service';
import { permitLockbox } from '../crew/crew-queries';
import { workOverlaps } from './work-overlaps';

/** A permit as its page shows it, with what this caller may do now; one read transaction. */
export async function permitDetail(deps: AppDeps, c: CallerContext, id: string): Promise<PermitDetail<Date>> {
  const { sequelize } = deps;
  return withTenant(sequelize, c.actor.tenantId, async () => {
    const permit = authorizeRecord(c.ability, 'read', 'Permit', await findPermit(sequelize, c.actor.tenantId, id), 'permit');
    // One connection per transaction: these run one after another.
    const actions = await availableActions(deps, c, permit);
    const { timeline, signatures, nextGasTestDue: gasDue } = await permitRecord(sequelize, permit, deps.clock.now());
    const lockbox = await permitLockbox(sequelize, c.actor.tenantId, id);
    const overlaps = await workOverlaps(sequelize, permit);
    return { ...permit, actions, timeline, signatures, nextGasTestDue: gasDue, lockbox, workOverlaps: overlaps.shown, workOverlapsMore: overlaps.more };
  });
}

/**
 * The permit's audit trail, its signatures and when its next repeat gas test is due, in one statement
 * (three before): PostgreSQL writes the two lists as JSON, so each is one value to read, not a row per event.
 */
async function permitRecord(
  sequelize: Sequelize,
  permit: PermitRow,
  now: Date,
): Promise<{ timeline: PermitTimelineEvent<Date>[]; signatures: PermitSignature<Date>[]; nextGasTestDue: string | null }> {
  // Only a live permit has a repeat gas test due: no need to look up its tests otherwise.
  const live = liveStates.includes(permit.state);
  const [row] = await sequelize.query<{ timeline: PermitTimelineEvent<string>[]; signatures: PermitSignature<string>[]; lastPass: Date | null }>(
    `SELECT coalesce((SELECT json_agg(json_build_object('seq', a.seq, 'action', a.action, 'fromState', a.from_state, 'toState', a.to_state, 'actorName', a.actor_name,
                                                   'actorRole', a.actor_role, 'reason', a.reason, 'data', a.data, 'occurredAt', a.occurred_at, 'entityType', a.entity_type)
                                 ORDER BY a.seq)
                      FROM audit_events a WHERE a.tenant_id = :tenantId AND a.permit_id = :permitId), '[]') AS timeline,
            coalesce((SELECT json_agg(json_build_object('event', s.event, 'signedName', s.signed_name, 'passwordConfirmed', s.password_confirmed, 'signedAt', s.signed_at,
                                                   'email', u.email) ORDER BY s.signed_at)
                      FROM permit_signatures s JOIN users u ON u.id = s.user_id WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId), '[]') AS signatures,
            CASE WHEN :live THEN (SELECT max(g.tested_at) FROM gas_tests g WHERE g.tenant_id = :tenantId AND g.permit_id = :permitId AND g.verdict = 'pass') END AS "lastPass"`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id, live }, type: QueryTypes.SELECT },
  );
  return {
    timeline: row.timeline.map((e) => ({ ...e, occurredAt: new Date(e.occurredAt) })),
    signatures: row.signatures.map((s) => ({ ...s, signedAt: new Date(s.signedAt) })),
    nextGasTestDue: live ? (nextGasTestDue(permit.state, row.lastPass ? new Date(row.lastPass) : null, permit.gasTestIntervalMinutes, now)?.toISOString() ?? null) : null,
  };
}
