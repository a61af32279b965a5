import { z } from 'zod';
import { isoDateTimeField, requiredText, textField, uuidSchema } from './common.schema';

const isoDateTime = isoDateTimeField();
const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const optionalNumber = (label: string, max: number) =>
  z.preprocess(
    (v) => (typeof v === 'string' ? (v.trim() === '' ? undefined : DECIMAL.test(v.trim()) ? Number(v.trim()) : Number.NaN) : v === null ? undefined : v),
    z.number({ message: `${label} must be a number.` }).min(0, `${label} cannot be negative.`).max(max, `${label} must be at most ${max}.`).optional(),
  );

export const checkKinds = ['vent', 'plug', 'fire_watch'] as const;
export type CheckKind = (typeof checkKinds)[number];
export const checkKindLabels: Record<CheckKind, string> = { vent: 'Vent check', plug: 'Plug check', fire_watch: 'Fire watch' };

export const plugFaces = ['intact', 'cracked', 'shrunk', 'moved'] as const;
export const plugFaceLabels: Record<(typeof plugFaces)[number], string> = { intact: 'Face intact', cracked: 'Cracked', shrunk: 'Shrunk from the pipe wall', moved: 'Moved along the pipe' };
export const pressureUnits = ['psig', 'kPa', 'inH2O'] as const;
export const fireWatchObservations = ['clear', 'hot_spot'] as const;
export const fireWatchObservationLabels: Record<(typeof fireWatchObservations)[number], string> = { clear: 'Area clear, nothing smouldering', hot_spot: 'Hot spot or smouldering found' };

const common = {
  checkedAt: isoDateTime,
  /** The vent or plug step of the isolation plan checked (optional: "all vents" is a valid check). */
  isolationStepId: uuidSchema.optional(),
  actionTaken: textField(1000, 'Action taken').optional(),
  notes: textField(1000, 'Notes').optional(),
};
const needsAction = (v: { actionTaken?: string }) => Boolean(v.actionTaken?.trim());

export const checkInputSchema = z
  .discriminatedUnion('kind', [
    z.strictObject({
      kind: z.literal('vent'),
      ...common,
      vapourAwayFromWork: z.boolean({ message: 'Say whether vapour is directed away from the work.' }),
      pressureBuilding: z.boolean({ message: 'Say whether pressure is building.' }),
      pressureReading: optionalNumber('The pressure reading', 100_000),
      pressureUnit: z.enum(pressureUnits).optional(),
    }),
    z.strictObject({ kind: z.literal('plug'), ...common, face: z.enum(plugFaces, { message: 'Say how the plug face looks.' }) }),
    z.strictObject({ kind: z.literal('fire_watch'), ...common, observation: z.enum(fireWatchObservations, { message: 'Say what the fire watch found.' }) }),
  ])
  .superRefine((v, ctx) => {
    const problem = (v.kind === 'vent' && (!v.vapourAwayFromWork || v.pressureBuilding)) || (v.kind === 'plug' && v.face !== 'intact') || (v.kind === 'fire_watch' && v.observation !== 'clear');
    if (problem && !needsAction(v)) ctx.addIssue({ code: 'custom', path: ['actionTaken'], message: 'Say what was done about it.' });
    if (v.kind === 'vent' && v.pressureReading !== undefined && !v.pressureUnit) ctx.addIssue({ code: 'custom', path: ['pressureUnit'], message: 'Choose the unit of the pressure reading.' });
  });
export type CheckInput = z.input<typeof checkInputSchema>;
export type CheckData = z.output<typeof checkInputSchema>;

export const checksQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  kind: z.enum(checkKinds).optional(),
});

const signature = {
  password: z.string({ message: 'Re-enter your password to sign.' }).min(1, 'Re-enter your password to sign.').max(256),
  signedName: requiredText(120, 'Typed name'),
};

export const handoverCreateSchema = z.strictObject({
  toUserId: uuidSchema,
  openPoints: requiredText(4000, 'Open points'),
  ...signature,
});
export type HandoverCreateInput = z.infer<typeof handoverCreateSchema>;

export const handoverAcceptSchema = z.strictObject(signature);
export type HandoverAcceptInput = z.infer<typeof handoverAcceptSchema>;
