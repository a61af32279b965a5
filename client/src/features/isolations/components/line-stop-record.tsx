import type { IsolationStep } from '@shared/types/isolations';
import { formatInZone } from '@shared/time/zone';

/** What was set for a line stop or mechanical plug. */
export function LineStopRecord({ step, timeZone }: { step: IsolationStep; timeZone: string }) {
  const r = step.lineStopAsBuilt;
  if (!r) return null;
  return (
    <p className="text-sm" data-testid="line-stop-record">
      <span className="font-semibold">Set:</span> {r.device}, {r.sizeIn} in
      {r.setPressure !== undefined ? `, set pressure ${r.setPressure} ${r.setPressureUnit ?? ''}`.trimEnd() : ''}
      {r.setPosition ? `, set at ${r.setPosition}` : ''}
      {r.setAt ? ` (${formatInZone(r.setAt, timeZone)})` : ''}.
    </p>
  );
}
