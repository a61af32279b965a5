import type { PermitEvent } from '@shared/permit/state-machine';

/** Steps that cannot be taken back, and what each one commits people to. */
export const irreversibleNotes: Partial<Record<PermitEvent, string>> = {
  approve: 'Approving issues the permit to the contractor. It cannot be taken back; if anything changes, cancel the permit instead.',
  accept: 'Accepting makes you the permit holder for your crew. This cannot be undone.',
  hand_back: 'Handing back ends the work under this permit; the crew may not restart under it. This cannot be undone.',
  return_to_service: 'Returning to service tells the control room the line may run again. This cannot be undone.',
  cancel: 'A cancelled permit cannot be reopened; the work would need a new request.',
  close: 'Closing files the permit for good. It cannot be reopened.',
};

/** One line under the dialog title: what the step does. */
export const eventExplanations: Partial<Record<PermitEvent, string>> = {
  submit: 'The authorisers are told the permit is waiting for them. Until one of them acts, the draft cannot be edited.',
  reject: 'The permit goes back to the requester as a draft, with your reasons, to be changed and sent again.',
  approve: 'You sign as the authoriser: re-enter your password and type your name.',
  accept: 'You sign as the contractor lead: re-enter your password and type your name.',
  confirm_isolated: 'You sign as the authoriser that the isolations are in place: every step applied and verified by a second person, an isolating device on every open side of the work, and the section proved dead. Re-enter your password and type your name.',
  start_work: 'Work may start now under this permit.',
  suspend: 'The crew must stop work and make the site safe.',
  resume: 'Work may restart under this permit. When the control room, an authoriser or Holdpoint stopped it, an authoriser re-validates it here: say what was checked.',
  hand_back: 'You sign that the work is complete and the site is left safe.',
  return_to_service: 'You sign that the isolations are removed and the walk-down is complete.',
  acknowledge_return: 'The control room acknowledges the line is back in service.',
  close: 'The permit is complete and filed.',
  cancel: 'The permit is withdrawn; no work may be done under it.',
  revalidate: 'Give the permit a new end time to bring it back into force.',
};
