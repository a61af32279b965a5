import type { CreatePermitInput } from '@shared/schemas/permit.schema';
import { nextWholeHourWall, wallTimeToIso } from '@shared/time/zone';
import type { PermitDetail } from '@shared/types/permits';

/** A new request: starting at the next whole hour but one, for an eight-hour shift. */
export function emptyPermitValues(now: Date, timeZone: string, contractorOrganisationId = ''): CreatePermitInput {
  return {
    kinds: [],
    title: '',
    scope: '',
    jobReference: '',
    pipelineId: '',
    fromPosition: undefined,
    toPosition: undefined,
    methodStatement: '',
    hazards: '',
    ppe: [],
    validFrom: wallTimeToIso(nextWholeHourWall(now, timeZone, 1), timeZone),
    validTo: wallTimeToIso(nextWholeHourWall(now, timeZone, 9), timeZone),
    contractorOrganisationId,
    contractorLeadUserId: null,
    fireWatchMinutes: 60,
    fireWatchPerson: '',
    gasTestWindowMinutes: undefined,
    gasTestIntervalMinutes: undefined,
  };
}

/** A draft back in the form, for editing after it was sent back. */
export function permitToFormValues(p: PermitDetail): CreatePermitInput {
  return {
    kinds: p.kinds,
    title: p.title,
    scope: p.scope,
    jobReference: p.jobReference ?? '',
    pipelineId: p.pipelineId,
    fromPosition: p.fromPosition,
    toPosition: p.toPosition,
    methodStatement: p.methodStatement,
    hazards: p.hazards,
    ppe: p.ppe,
    validFrom: new Date(p.validFrom).toISOString(),
    validTo: new Date(p.validTo).toISOString(),
    contractorOrganisationId: p.contractorOrganisationId,
    contractorLeadUserId: p.contractorLeadUserId,
    fireWatchMinutes: p.fireWatchMinutes,
    fireWatchPerson: p.fireWatchPerson ?? '',
    gasTestWindowMinutes: p.gasTestWindowMinutes,
    gasTestIntervalMinutes: p.gasTestIntervalMinutes,
  };
}
