/** The settings a tenant admin changes on the Settings page (GET and PATCH /api/tenant/settings). */
export interface TenantSettingsView {
  timeZone: string;
  /** Where signed audit checkpoints are mailed; null: they are only stored. */
  recordsEmail: string | null;
  auditCheckpointHours: number;
  isolationRecheckHours: number;
  maxPermitHours: number;
  gasTestIntervalMinutes: number;
  gasTestOverdueGraceMinutes: number;
  requireDailyBumpTest: boolean;
  fireWatchBasis: 'nfpa_51b_2019' | 'osha_half_hour';
  fireWatchMinutes: number;
  hotWorkLelPct: number;
  hotWorkLelReason: string | null;
}
