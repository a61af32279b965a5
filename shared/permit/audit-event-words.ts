import { stateLabel } from './record-words';

// One audit event's change in words, for the audit log and its CSV export: never a raw code or key.

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const ISO_TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/;

/** "lockNumber" or "lock_number" → "Lock number". */
export function fieldWords(key: string): string {
  const words = key.replace(/_/g, ' ').replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase().trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

function valueWords(key: string, value: unknown, formatTime: (iso: string) => string): string | null {
  if (value === null || value === undefined || value === '') return null;
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'number') return String(value);
  if (typeof value === 'string') {
    if (UUID.test(value)) return null;
    if (ISO_TIME.test(value) && !Number.isNaN(Date.parse(value))) return formatTime(value);
    if (/state$/i.test(key)) return stateLabel(value);
    return /^[a-z]+(_[a-z]+)+$/.test(value) ? fieldWords(value) : value;
  }
  if (Array.isArray(value)) {
    const parts = value.map((v) => valueWords(key, v, formatTime)).filter((v): v is string => Boolean(v));
    return parts.length ? parts.join(', ') : null;
  }
  if (typeof value === 'object') {
    const parts = Object.entries(value as Record<string, unknown>)
      .map(([k, v]) => {
        const w = valueWords(k, v, formatTime);
        return w ? `${fieldWords(k).toLowerCase()} ${w}` : null;
      })
      .filter((v): v is string => Boolean(v));
    return parts.length ? parts.join(', ') : null;
  }
  return null;
}

/** "Submitted → Approved" when the event moved a state, else empty. */
export function stateChangeWords(fromState: string | null, toState: string | null): string {
  if (!fromState && !toState) return '';
  if (!fromState) return `now ${stateLabel(toState)}`;
  if (!toState || fromState === toState) return stateLabel(fromState);
  return `${stateLabel(fromState)} → ${stateLabel(toState)}`;
}

/**
 * The event's recorded values, one line each ("Lock number: L-102"). Identifiers are left out (they
 * mean nothing to a reader; the event links to its record), times are written by `formatTime` (the
 * site's zone with its name).
 */
export function auditDataWords(data: Record<string, unknown> | null | undefined, formatTime: (iso: string) => string): string[] {
  if (!data) return [];
  return Object.entries(data)
    .filter(([k]) => !/(^id$|Id$|_id$|Ids$|_ids$|hash$)/.test(k))
    .map(([k, v]) => {
      const w = valueWords(k, v, formatTime);
      return w ? `${fieldWords(k)}: ${w}` : null;
    })
    .filter((v): v is string => Boolean(v));
}
