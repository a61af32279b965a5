import { QueryTypes, type Sequelize } from 'sequelize';
import { holdsIsolations } from '@shared/permit/states';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import { liveCertificateState } from '@shared/isolations/certificate-states';
import { conditionLabels, type StepCondition } from '@shared/schemas/isolation.schema';
import type { PointNeighbour } from '@shared/types/isolations';

/**
 * Simultaneous operations (HSE HSG250: a permit-to-work system must identify conflicting work). A point
 * held open (a vent or a drain) cannot be shared: whichever permit finishes first closes it under the
 * other. Two permits holding the same valve closed both need it closed, so that is allowed and shown.
 */
const openConditions: readonly StepCondition[] = ['vent_open', 'drained'];

function heldWords(condition: StepCondition) {
  if (openConditions.includes(condition)) return 'open';
  if (condition === 'closed_locked_tagged') return 'closed';
  return `in place (${conditionLabels[condition].toLowerCase()})`;
}

export interface NeighbourFinding extends PointNeighbour {
  stepId: string;
  /** The step's place in this plan, from 1. */
  seq: number;
}

interface Row {
  stepId: string;
  seq: number;
  pointId: string;
  label: string;
  mine: StepCondition;
  theirs: StepCondition;
  inPlace: boolean;
  permitNumber: string;
  longTermUnder: string | null;
}

/**
 * Every other permit, in a state from accepted to work complete (or whose isolation a live long-term
 * certificate keeps beyond it, HSE HSG253), with a step on a point of this plan
 * (or of one step, `stepId`) that is not taken off: a conflict when the other permit has the point in
 * place and either side holds it open or the two hold it differently; otherwise shared.
 */
export async function pointNeighbours(sequelize: Sequelize, tenantId: string, permitId: string, stepId?: string) {
  const rows = await sequelize.query<Row>(
    `SELECT mine.id AS "stepId", mine.seq, mine.point_id AS "pointId", ip.tag_code AS label, mine.condition AS mine, theirs.condition AS theirs,
            theirs.status IN (:inPlace) AS "inPlace", other.number AS "permitNumber", lt.number AS "longTermUnder"
     FROM isolation_steps mine
     JOIN isolation_points ip ON ip.tenant_id = mine.tenant_id AND ip.id = mine.point_id
     JOIN isolation_steps theirs ON theirs.tenant_id = mine.tenant_id AND theirs.point_id = mine.point_id AND theirs.permit_id <> mine.permit_id AND theirs.status <> 'removed'
     LEFT JOIN isolation_certificates lt ON lt.tenant_id = theirs.tenant_id AND lt.id = theirs.certificate_id AND lt.long_term AND lt.state = :liveCertificate
     JOIN permits other ON other.tenant_id = theirs.tenant_id AND other.id = theirs.permit_id AND (other.state IN (:holding) OR lt.id IS NOT NULL)
     WHERE mine.tenant_id = :tenantId AND mine.permit_id = :permitId AND mine.status <> 'removed' ${stepId ? 'AND mine.id = :stepId' : ''}
     ORDER BY mine.seq, other.number`,
    { replacements: { tenantId, permitId, stepId: stepId ?? null, inPlace: inPlaceStatuses, holding: holdsIsolations, liveCertificate: liveCertificateState }, type: QueryTypes.SELECT },
  );
  const conflicts: NeighbourFinding[] = [];
  const shared: NeighbourFinding[] = [];
  for (const r of rows) {
    const finding = { stepId: r.stepId, seq: r.seq, pointId: r.pointId, label: r.label, permitNumber: r.permitNumber, held: r.theirs, message: `${r.label} is held ${heldWords(r.theirs)} by ${r.permitNumber}${r.longTermUnder ? `, kept long-term under ${r.longTermUnder}` : ''}` };
    const clash = r.mine !== r.theirs || openConditions.includes(r.mine);
    if (!clash) shared.push(finding);
    else if (r.inPlace) conflicts.push(finding);
  }
  return { conflicts, shared };
}

/** The answer's shape: no step ids or plan positions, only what the plan page shows. */
export const asNeighbours = (findings: NeighbourFinding[]): PointNeighbour[] =>
  findings.map(({ pointId, label, permitNumber, held, message }) => ({ pointId, label, permitNumber, held, message }));
