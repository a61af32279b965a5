import { permitEventLabels, type PermitEvent } from './state-machine';
import { permitStateLabels, type PermitState } from './states';
import { positionPrefix, type LocationUnit } from '../schemas/assets.schema';
import type { GasUnit } from '../calc/atmosphere';

// The permit's record in the words the screen and the printed permit both use: never a raw code.

const actionWords: Record<string, string> = {
  created: 'Created',
  edited: 'Edited',
  plan_saved: 'Isolation plan saved',
  hot_work_stopped: 'Hot work stopped',
  checklist_confirmed: 'Checklist item confirmed',
  checklist_unconfirmed: 'Checklist item unconfirmed',
  walkdown_confirmed: 'Walk-down item confirmed',
  walkdown_unconfirmed: 'Walk-down item unconfirmed',
  proving_started: 'Hold test started',
  section_proved: 'Section proved dead',
  proving_failed: 'Hold test failed',
  gas_test_recorded: 'Gas test recorded',
  gas_tests_imported: 'Gas tests imported',
  gas_limits_set: 'Gas limits set',
  handover_signed_out: 'Handover signed by the outgoing lead',
  handover_accepted: 'Handover accepted by the incoming lead',
  check_overdue: 'Check overdue',
  attachment_added: 'Attachment added',
  removal_exception_recorded: 'Removal by another person authorised',
  lock_handed_over: 'Lock handed over at a shift change',
  crew_lock_handed_over: 'Personal lock on the lockbox handed over at a shift change',
  crew_signed_off_under_exception: 'Personal lock taken off under the exception procedure',
  certificate_issued: 'Isolation certificate issued',
  certificate_linked: 'Relies on an existing isolation certificate',
  certificate_released: 'No longer relies on its isolation certificate',
  certificate_returned: 'Isolation certificate returned',
  certificate_long_term: 'Isolation kept in place long-term',
  certificate_recheck_passed: 'Long-term isolation re-check passed',
  certificate_recheck_failed: 'Long-term isolation re-check failed',
  certificate_recheck_overdue: 'Long-term isolation re-check overdue',
  settings_changed: 'Site settings changed',
};

/** "plan_saved" → "Isolation plan saved"; an action without its own words is written as a sentence. */
export function auditActionLabel(action: string): string {
  const words = actionWords[action] ?? permitEventLabels[action as PermitEvent];
  if (words) return words;
  const text = action.replace(/_/g, ' ').trim();
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** A state in words; an unknown code is written as words rather than shown raw. */
export function stateLabel(state: string | null | undefined): string {
  if (!state) return '';
  return permitStateLabels[state as PermitState] ?? state.replace(/_/g, ' ');
}

export const stepStatusLabels: Record<string, string> = { planned: 'Planned', applied: 'Applied', verified: 'Verified', removed: 'Removed' };

/** How a gas unit is printed beside a number: "% LEL", "% vol", "ppm". */
export const gasUnitLabels: Record<GasUnit, string> = { '%LEL': '% LEL', '%vol': '% vol', ppm: 'ppm' };

/** "MP 21.998" or "KP 3.25": at most three decimals, none trailing. */
export const positionText = (value: number, unit: LocationUnit) => `${positionPrefix[unit]} ${Number(Number(value).toFixed(3))}`;
