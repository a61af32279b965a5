import { useId } from 'react';
import { closesLine, coverSides, isIsolatingKind, planGaps, sidesClosedBy, workSides, type DeadEnds, type WorkRange, type WorkSide } from '@shared/isolations/readiness';
import { formatPosition } from '@shared/assets/format';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { TextAreaField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import type { DraftRow } from '../lib/plan-draft';

interface Props {
  rows: DraftRow[];
  range: WorkRange;
  unit: LocationUnit;
  /** A side declared a dead end holds its reason ('' while it is being typed); null where product can come from. */
  deadEnds: DeadEnds;
  errors: Partial<Record<WorkSide, string>>;
  onChange: (next: DeadEnds) => void;
}

const sideTitle: Record<WorkSide, string> = { upstream: 'Upstream', downstream: 'Downstream' };

/**
 * What isolates the work on each side, worked out from the rows as the planner edits them, with what
 * still keeps the plan from ever reaching Isolated (the same words the server refuses with).
 */
export function PlanCoverage({ rows, range, unit, deadEnds, errors, onChange }: Props) {
  const headingId = useId();
  const declared: DeadEnds = { upstream: deadEnds.upstream?.trim() || null, downstream: deadEnds.downstream?.trim() || null };
  const sides = coverSides(
    rows.map((r) => ({ kind: r.kind, position: r.position, verified: false })),
    range,
    declared,
  );
  const gaps = planGaps(rows.filter((r) => isIsolatingKind(r.kind)).length, sides);
  const devicesOn = (side: WorkSide) => rows.filter((r) => closesLine(r.kind) && sidesClosedBy(r.position, range).includes(side)).map((r) => r.label);
  const where = (side: WorkSide) => (side === 'upstream' ? `at or before ${formatPosition(range.from, unit)}` : `at or beyond ${formatPosition(range.to, unit)}`);

  return (
    <section aria-labelledby={headingId} className="flex flex-col gap-3 rounded-card border border-line p-3" data-testid="plan-coverage">
      <h3 id={headingId} className="font-semibold">
        Isolating devices around the work
      </h3>
      <p className="text-sm text-ink-soft">
        Only a block valve closed, locked and tagged, a blind, a line stop or an electrical isolator isolates. Vents, drains and mud plugs do not, and a check valve never does.
      </p>
      <ul className="flex flex-col gap-3">
        {workSides.map((side) => {
          const on = devicesOn(side);
          const isDeadEnd = deadEnds[side] !== null;
          return (
            <li key={side} className="flex flex-col gap-2" data-testid={`coverage-${side}`}>
              <p className="text-sm">
                <span className="font-semibold">
                  {sideTitle[side]} ({where(side)}):
                </span>{' '}
                {on.length ? on.join(', ') : isDeadEnd ? 'none: declared a dead end' : <span className="font-semibold text-danger">no isolating device</span>}
              </p>
              <label className="flex min-h-11 items-start gap-3 text-sm">
                <input
                  type="checkbox"
                  className="mt-1 size-6 shrink-0"
                  checked={isDeadEnd}
                  onChange={(e) => onChange({ ...deadEnds, [side]: e.target.checked ? '' : null })}
                />
                <span>No product can reach the work from {side}: this side is a dead end (the end of the line, or a branch cut and capped).</span>
              </label>
              {isDeadEnd ? (
                <TextAreaField
                  label={`Why no product can come from ${side}`}
                  rows={2}
                  maxLength={300}
                  value={deadEnds[side] ?? ''}
                  onChange={(e) => onChange({ ...deadEnds, [side]: e.target.value })}
                  error={errors[side]}
                />
              ) : null}
            </li>
          );
        })}
      </ul>
      {gaps.length ? (
        <Notice tone="caution" title="This plan cannot reach Isolated yet" role="status">
          <ul className="list-disc pl-5" data-testid="plan-gaps">
            {gaps.map((g) => (
              <li key={g}>{g}</li>
            ))}
          </ul>
        </Notice>
      ) : (
        <p className="text-sm" role="status">
          Every side of the work has an isolating device or is declared a dead end. Before work, the section is proved dead and the authoriser signs the isolations in place.
        </p>
      )}
    </section>
  );
}
