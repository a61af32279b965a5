import { gasTestPlaceLabels, type GasTestPlace } from '../schemas/gas-tests.schema';
import { formatInZone } from '../time/zone';
import type { LiveEvent, LiveEventFacts } from '../types/live';

/**
 * What an open screen raises as an alarm (sound, vibration, a banner that stays until someone says
 * they have seen it): the work was stopped, or the atmosphere or an isolation can no longer be trusted.
 */
export const alarmKinds = ['suspended', 'gas_test_failed', 'gas_test_overdue', 'certificate_recheck_failed'] as const;
export type AlarmKind = (typeof alarmKinds)[number];

interface Classifiable {
  action: string;
  fromState: string | null;
  toState: string | null;
  facts: LiveEventFacts;
}

/** The alarm an audit event raises, or null for an ordinary change. */
export function alarmKindOf(e: Classifiable): AlarmKind | null {
  // Any cause: a person's stop, a failing reading, a failed vent or plug check, an overdue test on hot work.
  if (e.toState === 'suspended' && e.fromState !== 'suspended') return 'suspended';
  if (e.action === 'gas_test_recorded' && e.facts.verdict === 'fail') return 'gas_test_failed';
  if (e.action === 'check_overdue' && e.facts.check === 'gas_test') return 'gas_test_overdue';
  if (e.action === 'certificate_recheck_failed') return 'certificate_recheck_failed';
  return null;
}

const stoppedBy: Record<string, string> = {
  control_room: 'by the control room',
  authoriser: 'by an authoriser',
  lead: 'by the contractor lead',
  system: 'by Holdpoint',
};

export interface AlarmWords {
  /** One sentence: what happened, to which permit, when (site time with the zone). */
  headline: string;
  /** The recorded reason, when there is one. */
  detail: string | null;
  /** What the person should do now. */
  todo: string;
}

/** "3 Dec, 14:05 GMT (Europe/London)": the site's clock, its zone's short name and the zone itself. */
export const alarmTime = (value: string | Date, timeZone: string) => `${formatInZone(value, timeZone, 'dayTime')} (${timeZone})`;

const permitWords = (e: LiveEvent) => {
  const numbers = e.permits.map((p) => p.number);
  return numbers.length > 1 ? `permits ${numbers.slice(0, -1).join(', ')} and ${numbers.at(-1)}` : `permit ${numbers[0] ?? ''}`.trim();
};

/** A recorded reason as a sentence: capital first, full stop last. */
const sentence = (text: string | null) => {
  const t = text?.trim();
  if (!t) return null;
  const s = t.charAt(0).toUpperCase() + t.slice(1);
  return /[.!?]$/.test(s) ? s : `${s}.`;
};

/** The alarm in plain words, for the banner and for a screen reader. */
export function alarmWords(e: LiveEvent, timeZone: string): AlarmWords {
  const when = alarmTime(e.occurredAt, timeZone);
  const which = permitWords(e);
  const Which = which.charAt(0).toUpperCase() + which.slice(1);
  switch (e.alarm) {
    case 'suspended':
      return {
        headline: `Stop work. ${Which} was suspended ${stoppedBy[e.facts.suspendedBy ?? ''] ?? ''} at ${when}.`.replace(/ {2,}/g, ' '),
        detail: sentence(e.reason),
        todo: 'Make the work safe and keep it stopped. Work goes on only when the permit is resumed.',
      };
    case 'gas_test_failed': {
      const place = gasTestPlaceLabels[e.facts.place as GasTestPlace];
      return {
        headline: `Stop work. A gas test failed on ${which} at ${when}.`,
        detail: [place ? `${place}:` : null, sentence(e.reason)].filter(Boolean).join(' ') || null,
        todo: 'Leave the area, keep others out and do not start any flame or spark until a new test passes.',
      };
    }
    case 'gas_test_overdue':
      return {
        headline: `Repeat gas test overdue on ${which}: it was due at ${e.facts.dueAt ? alarmTime(e.facts.dueAt, timeZone) : when}.`,
        detail: null,
        todo: 'Test the atmosphere now. If it cannot be tested, stop the work.',
      };
    case 'certificate_recheck_failed':
      return {
        headline: `Stop work. Long-term isolation ${e.facts.certificateNumber ?? ''} failed its re-check at ${when}.`.replace(/ {2,}/g, ' '),
        detail: [sentence(e.reason), `${Which} ${e.permits.length > 1 ? 'work' : 'works'} under it.`].filter(Boolean).join(' '),
        todo: 'Nobody works under this isolation until it is put right and a passing re-check is recorded.',
      };
    default:
      return { headline: `${Which} changed at ${when}.`, detail: sentence(e.reason), todo: '' };
  }
}
