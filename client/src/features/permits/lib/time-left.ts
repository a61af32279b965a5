import { formatDistance } from 'date-fns';

/** "5 h 12 min", "2 d 3 h", "40 min", "less than a minute". */
export function formatSpan(ms: number): string {
  const minutes = Math.floor(Math.abs(ms) / 60_000);
  if (minutes < 1) return 'less than a minute';
  const d = Math.floor(minutes / 1440);
  const h = Math.floor((minutes % 1440) / 60);
  const m = minutes % 60;
  if (d) return h ? `${d} d ${h} h` : `${d} d`;
  if (h) return m ? `${h} h ${m} min` : `${h} h`;
  return `${m} min`;
}

export type ValidityPhase = 'not_yet' | 'valid' | 'ended';

/** Where now falls in the validity window, in words. */
export function describeValidity(now: Date, validFrom: string | Date, validTo: string | Date): { phase: ValidityPhase; text: string } {
  const t = now.getTime();
  const from = new Date(validFrom).getTime();
  const to = new Date(validTo).getTime();
  if (t < from) return { phase: 'not_yet', text: `starts in ${formatSpan(from - t)}` };
  if (t <= to) return { phase: 'valid', text: `valid for ${formatSpan(to - t)} more` };
  return { phase: 'ended', text: `expired ${formatSpan(t - to)} ago` };
}

/** The next repeat gas test: "due in 12 minutes" or "overdue by 5 minutes" (date-fns wording). */
export function describeGasDue(now: Date, due: string | Date): { overdue: boolean; text: string } {
  const d = new Date(due);
  const overdue = d.getTime() < now.getTime();
  const span = formatDistance(d, now);
  return { overdue, text: overdue ? `overdue by ${span}` : `due in ${span}` };
}
