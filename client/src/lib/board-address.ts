/**
 * Where the control room acknowledges one isolation step: the live board narrowed to what waits for it on
 * that line, with the step named after `#step-` so the board brings that very row on screen.
 */
export const boardStepAddress = (pipelineId: string, stepId: string) =>
  `/board?unacknowledged=true&pipelineId=${encodeURIComponent(pipelineId)}#step-${encodeURIComponent(stepId)}`;

/** The step an address's hash names (see boardStepAddress), or null. */
export function stepInHash(hash: string): string | null {
  const m = /^#step-([^#?]+)$/.exec(hash);
  if (!m) return null;
  try {
    return decodeURIComponent(m[1]);
  } catch {
    return null;
  }
}
