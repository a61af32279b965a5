import type { TenantSettingsView } from '../types/tenant-settings';
import { fireWatchFloorMinutes } from '../schemas/tenant-settings.schema';

// The Settings page's rules, one definition for the screen and the API: each setting's name and
// value in words, what changed, and which changes weaken a safety margin (those need a reason).

export type SettingKey = keyof TenantSettingsView;

export const settingKeys = [
  'timeZone', 'recordsEmail', 'auditCheckpointHours', 'isolationRecheckHours', 'maxPermitHours', 'gasTestIntervalMinutes',
  'gasTestOverdueGraceMinutes', 'requireDailyBumpTest', 'fireWatchBasis', 'fireWatchMinutes', 'hotWorkLelPct', 'hotWorkLelReason',
] as const satisfies readonly SettingKey[];

export const settingLabels: Record<SettingKey, string> = {
  timeZone: 'Site time zone',
  recordsEmail: 'Records address for signed audit checkpoints',
  auditCheckpointHours: 'Sign the audit trail every',
  isolationRecheckHours: 'Re-check long-term isolations every',
  maxPermitHours: 'Longest permit validity',
  gasTestIntervalMinutes: 'Repeat gas tests on live hot work every',
  gasTestOverdueGraceMinutes: 'Grace before an overdue gas test suspends hot work',
  requireDailyBumpTest: 'Gas detectors need a bump test each site day',
  fireWatchBasis: 'Fire watch rule',
  fireWatchMinutes: 'Fire watch after hot work',
  hotWorkLelPct: 'Flammable gas limit for hot work',
  hotWorkLelReason: 'Reason for a hot-work limit above zero',
};

export const fireWatchBasisLabels: Record<TenantSettingsView['fireWatchBasis'], string> = {
  nfpa_51b_2019: 'NFPA 51B (2019 edition): at least 60 minutes',
  osha_half_hour: 'OSHA 29 CFR 1910.252: at least 30 minutes',
};

const plural = (n: number, one: string) => `${n} ${one}${n === 1 ? '' : 's'}`;

/** One setting's value as a site worker reads it: "every 72 hours", "none", "yes". */
export function settingValueWords<K extends SettingKey>(key: K, value: TenantSettingsView[K]): string {
  if (value === null || value === undefined || value === '') return 'none';
  switch (key) {
    case 'auditCheckpointHours':
    case 'isolationRecheckHours':
      return `every ${plural(value as number, 'hour')}`;
    case 'maxPermitHours':
      return plural(value as number, 'hour');
    case 'gasTestIntervalMinutes':
      return `every ${plural(value as number, 'minute')}`;
    case 'gasTestOverdueGraceMinutes':
      return value === 0 ? 'none (suspends at once)' : plural(value as number, 'minute');
    case 'fireWatchMinutes':
      return plural(value as number, 'minute');
    case 'requireDailyBumpTest':
      return value ? 'yes' : 'no';
    case 'fireWatchBasis':
      return fireWatchBasisLabels[value as TenantSettingsView['fireWatchBasis']];
    case 'hotWorkLelPct':
      return `${String(value)} %LEL`;
    default:
      return String(value);
  }
}

export interface SettingChange {
  key: SettingKey;
  label: string;
  from: string;
  to: string;
}

/** Each setting that differs, before and after in words, in the page's order. */
export function settingChanges(before: TenantSettingsView, after: TenantSettingsView): SettingChange[] {
  return settingKeys
    .filter((k) => (before[k] ?? null) !== (after[k] ?? null))
    .map((k) => ({ key: k, label: settingLabels[k], from: settingValueWords(k, before[k]), to: settingValueWords(k, after[k]) }));
}

export interface WeakenedMargin {
  key: SettingKey;
  words: string;
}

const effectiveFireWatch = (s: TenantSettingsView) => Math.max(s.fireWatchMinutes, fireWatchFloorMinutes(s));

/**
 * The changes that make work less safe or its record less protected: each needs a reason, kept in
 * the audit trail, as a raise of the hot-work limit above 0 %LEL needs its own stated reason.
 */
export function weakenedMargins(before: TenantSettingsView, after: TenantSettingsView): WeakenedMargin[] {
  const found: WeakenedMargin[] = [];
  const add = (key: SettingKey, words: string) => found.push({ key, words });
  if (after.hotWorkLelPct > before.hotWorkLelPct) add('hotWorkLelPct', `hot work allowed up to ${after.hotWorkLelPct} %LEL instead of ${before.hotWorkLelPct} %LEL`);
  if (before.requireDailyBumpTest && !after.requireDailyBumpTest) add('requireDailyBumpTest', 'gas detectors no longer need a bump test each site day');
  if (before.fireWatchBasis === 'nfpa_51b_2019' && after.fireWatchBasis === 'osha_half_hour') add('fireWatchBasis', 'the OSHA half hour instead of the NFPA 51B hour of fire watch');
  if (effectiveFireWatch(after) < effectiveFireWatch(before)) add('fireWatchMinutes', `fire watch shortened to ${effectiveFireWatch(after)} minutes from ${effectiveFireWatch(before)}`);
  if (after.gasTestOverdueGraceMinutes > before.gasTestOverdueGraceMinutes) add('gasTestOverdueGraceMinutes', `hot work goes on ${after.gasTestOverdueGraceMinutes} minutes past an overdue gas test`);
  if (after.gasTestIntervalMinutes > before.gasTestIntervalMinutes) add('gasTestIntervalMinutes', `gas tests repeated every ${after.gasTestIntervalMinutes} minutes instead of ${before.gasTestIntervalMinutes}`);
  if (after.isolationRecheckHours > before.isolationRecheckHours) add('isolationRecheckHours', `long-term isolations re-checked every ${after.isolationRecheckHours} hours instead of ${before.isolationRecheckHours}`);
  if (after.maxPermitHours > before.maxPermitHours) add('maxPermitHours', `permits may run ${after.maxPermitHours} hours instead of ${before.maxPermitHours}`);
  if (after.auditCheckpointHours > before.auditCheckpointHours) add('auditCheckpointHours', `the audit trail signed every ${after.auditCheckpointHours} hours instead of ${before.auditCheckpointHours}`);
  if (before.recordsEmail && !after.recordsEmail) add('recordsEmail', 'signed audit checkpoints no longer mailed to the records office');
  return found;
}

/** The settings a change would leave, from the current ones and the fields sent ("" or null clears an address or reason). */
export function applySettingsInput(current: TenantSettingsView, input: Partial<Record<SettingKey, unknown>>): TenantSettingsView {
  const next = { ...current } as Record<SettingKey, unknown>;
  for (const k of settingKeys) {
    if (input[k] === undefined) continue;
    next[k] = (k === 'recordsEmail' || k === 'hotWorkLelReason') && !input[k] ? null : input[k];
  }
  return next as unknown as TenantSettingsView;
}
