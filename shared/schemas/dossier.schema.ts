import { z } from 'zod';

/** Starting a dossier takes nothing but the permit in the address; anything sent is refused. */
export const startDossierInputSchema = z.strictObject({});
export type StartDossierInput = z.infer<typeof startDossierInputSchema>;
