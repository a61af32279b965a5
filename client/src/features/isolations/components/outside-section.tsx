import { pointsOutsideSection } from '@shared/isolations/section';
import type { WorkRange } from '@shared/isolations/readiness';
import { Notice } from '@client/components/ui/notice';
import type { DraftRow } from '../lib/plan-draft';

/** Warns, as the plan is drawn up, of a vent, drain or plug chosen beyond an isolating device: it would work on live line. */
export function OutsideSection({ rows, range }: { rows: DraftRow[]; range: WorkRange }) {
  const outside = pointsOutsideSection(rows, range);
  if (!outside.length) return null;
  return (
    <Notice tone="caution" title="Outside the isolated section" role="status">
      <ul className="list-disc pl-5" data-testid="outside-section">
        {outside.map((o) => (
          <li key={o.point.key}>{o.message}</li>
        ))}
      </ul>
    </Notice>
  );
}
