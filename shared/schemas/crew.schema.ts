import { z } from 'zod';
import { requiredText } from './common.schema';

/** POST /api/permits/:id/crew/sign-on: the signed-in person puts their personal lock on the permit's lockbox. */
export const crewSignOnInputSchema = z.strictObject({
  personalLockNumber: requiredText(40, 'Personal lock number'),
});
export type CrewSignOnInput = z.infer<typeof crewSignOnInputSchema>;

/** POST /api/permits/:id/crew/sign-off: the signed-in person takes their own personal lock off. */
export const crewSignOffInputSchema = z.strictObject({});
export type CrewSignOffInput = z.infer<typeof crewSignOffInputSchema>;
