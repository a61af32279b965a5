// Where a gas test is taken, with its words. Kept apart from the input schemas (which re-export it) so the
// signed-in shell can name a place without loading the validation library.
export const gasTestPlaces = ['inside_pipe_upstream', 'inside_pipe_downstream', 'work_area', 'vent_outlet', 'other'] as const;
export type GasTestPlace = (typeof gasTestPlaces)[number];
export const gasTestPlaceLabels: Record<GasTestPlace, string> = {
  inside_pipe_upstream: 'Inside the pipe, upstream of the plug',
  inside_pipe_downstream: 'Inside the pipe, downstream of the plug',
  work_area: 'Work area',
  vent_outlet: 'Vent outlet',
  other: 'Other (say where)',
};
