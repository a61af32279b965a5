import type { LocationUnit } from '@shared/schemas/assets.schema';
import { positionText } from '@shared/permit/record-words';

/** How the tenant's unit is said beside a position field. */
export const positionWord: Record<LocationUnit, string> = { mi: 'milepost', km: 'kilometre post' };

/** "MP 12.4" or "KP 3.25": the same words as the printed permit. */
export const formatPosition = positionText;

/** "MP 12.4 – MP 13" */
export const formatRange = (from: number, to: number, unit: LocationUnit) => `${formatPosition(from, unit)} – ${formatPosition(to, unit)}`;

/** "BM-10 Cedar Run Lateral": the code once, whether or not the register's name repeats it. */
export const pipelineLabel = (p: { code: string; name: string }) => (p.name.toUpperCase().startsWith(p.code.toUpperCase()) ? p.name : `${p.code} ${p.name}`);
