import type { CreatePermitInput } from '@shared/schemas/permit.schema';

export type PermitField = keyof CreatePermitInput;

export interface FormStep {
  key: 'job' | 'place' | 'time' | 'method' | 'review';
  title: string;
  fields: PermitField[];
}

/** The request form's steps and the fields each one owns (validated before "Next"). */
export const formSteps: FormStep[] = [
  { key: 'job', title: 'Job', fields: ['kinds', 'title', 'scope', 'jobReference'] },
  { key: 'place', title: 'Place', fields: ['pipelineId', 'fromPosition', 'toPosition'] },
  {
    key: 'time',
    title: 'Time and crew',
    fields: ['validFrom', 'validTo', 'contractorOrganisationId', 'contractorLeadUserId', 'fireWatchMinutes', 'fireWatchPerson', 'gasTestWindowMinutes', 'gasTestIntervalMinutes'],
  },
  { key: 'method', title: 'Method, hazards and PPE', fields: ['methodStatement', 'hazards', 'ppe'] },
  { key: 'review', title: 'Review', fields: [] },
];

/** "ppe.2" → "ppe": the form field a server error path belongs to, or null when it is none of them. */
export function fieldOfPath(path: string): PermitField | null {
  const head = path.split('.')[0];
  return formSteps.some((s) => s.fields.includes(head as PermitField)) ? (head as PermitField) : null;
}

/** The index of the first step holding any of these fields; -1 when none does. */
export function firstStepWith(fields: readonly string[]): number {
  return formSteps.findIndex((s) => s.fields.some((f) => fields.includes(f)));
}
