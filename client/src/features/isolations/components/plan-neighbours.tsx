import type { PointNeighbour } from '@shared/types/isolations';
import { Notice } from '@client/components/ui/notice';

/**
 * Other permits on the points of this plan (simultaneous operations, HSE HSG250): a point another
 * permit holds in place in a way this plan would undo stops approval and apply, so it shows in red
 * before anyone submits; a valve both permits hold closed is allowed and shown so both crews know.
 */
export function PlanNeighbours({ conflicts, shared }: { conflicts: PointNeighbour[]; shared: PointNeighbour[] }) {
  if (!conflicts.length && !shared.length) return null;
  return (
    <div className="flex flex-col gap-2" data-testid="plan-neighbours">
      {conflicts.length ? (
        <Notice tone="danger" role="alert" title="Another permit holds points this plan would operate">
          <ul className="list-disc pl-5 text-sm">
            {conflicts.map((c) => (
              <li key={`${c.pointId}-${c.permitNumber}`}>{c.message}.</li>
            ))}
          </ul>
          <p className="text-sm">The permit cannot be approved, and these points cannot be operated, until that permit&apos;s isolations come off or the plan changes.</p>
        </Notice>
      ) : null}
      {shared.length ? (
        <Notice tone="info" title="Shared with another permit">
          <ul className="list-disc pl-5 text-sm">
            {shared.map((s) => (
              <li key={`${s.pointId}-${s.permitNumber}`}>{s.message}. Both permits need it closed; it stays closed until both are finished with it.</li>
            ))}
          </ul>
        </Notice>
      ) : null}
    </div>
  );
}
