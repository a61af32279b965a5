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
    const timeline = await permitTimeline(sequelize, c.actor.tenantId, id);
    const signatures = await permitSignatures(sequelize, c.actor.tenantId, id);
    const gasDue = await permitGasTestDue(sequelize, permit, deps.clock.now());
    const lockbox = await permitLockbox(sequelize, c.actor.tenantId, id);
    const overlaps = await workOverlaps(sequelize, permit);
    return { ...permit, actions, timeline, signatures, nextGasTestDue: gasDue, lockbox, workOverlaps: overlaps };
  });
}

export async function permitTimeline(sequelize: Sequelize, tenantId: string, permitId: string): Promise<PermitTimelineEvent<Date>[]> {
  return sequelize.query<PermitTimelineEvent<Date>>(
    `SELECT seq, action, from_state AS "fromState", to_state AS "toState", actor_name AS "actorName", actor_role AS "actorRole",
            reason, data, occurred_at AS "occurredAt", entity_type AS "entityType"
     FROM audit_events WHERE tenant_id = :tenantId AND permit_id = :permitId ORDER BY seq`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
}

export async function permitSignatures(sequelize: Sequelize, tenantId: string, permitId: string): Promise<PermitSignature<Date>[]> {
  return sequelize.query<PermitSignature<Date>>(
    `SELECT s.event, s.signed_name AS "signedName", s.password_confirmed AS "passwordConfirmed", s.signed_at AS "signedAt", u.email
     FROM permit_signatures s JOIN users u ON u.id = s.user_id WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId ORDER BY s.signed_at`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
}

/** When the next repeat gas test is due on a live permit (null otherwise). */
export async function permitGasTestDue(sequelize: Sequelize, permit: PermitRow, now: Date): Promise<string | null> {
  // Only a live permit has one: no need to look up its tests otherwise.
  if (!liveStates.includes(permit.state)) return null;
  const [row] = await sequelize.query<{ last: Date | null }>(
    `SELECT max(tested_at) AS last FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :permitId AND verdict = 'pass'`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id }, type: QueryTypes.SELECT },
  );
  return nextGasTestDue(permit.state, row.last ? new Date(row.last) : null, permit.gasTestIntervalMinutes, now)?.toISOString() ?? null;
}
