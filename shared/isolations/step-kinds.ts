// The kinds of isolation step, with their words. Kept apart from the input schemas (which re-export them) so
// the start page can name a step without loading the validation library.
export const stepKinds = ['block_valve', 'vent', 'drain', 'plug', 'blind', 'isolator', 'line_stop'] as const;
export type StepKind = (typeof stepKinds)[number];
export const stepKindLabels: Record<StepKind, string> = {
  block_valve: 'Block valve',
  vent: 'Vent',
  drain: 'Drain',
  plug: 'Mud plug',
  blind: 'Blind',
  isolator: 'Isolator',
  line_stop: 'Line stop / mechanical plug',
};
