import { Link } from 'react-router-dom';
import { formatPosition } from '@shared/assets/format';
import { permitStateLabels } from '@shared/permit/states';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { addDays, formatInZone, siteDay, startOfSiteDay } from '@shared/time/zone';
import type { PlanPermit } from '@shared/types/plan';
import { byPipeline, permitFlags } from '../lib/plan-words';

const weekdays = ['Sun', 'Mon', 'Tue', 'Wed', 'Thu', 'Fri', 'Sat'];
/** "Thu 3" from a site day "2026-12-03" (a calendar date: no zone involved). */
const dayLabel = (day: string) => `${weekdays[new Date(`${day}T00:00:00Z`).getUTCDay()]} ${Number(day.slice(8, 10))}`;

interface Props {
  from: string;
  to: string;
  permits: PlanPermit[];
  timeZone: string;
  unit: LocationUnit;
  now: Date;
}

/** Where a moment falls across the window, 0–100 %, clamped. */
const at = (t: number, from: number, to: number) => Math.min(100, Math.max(0, ((t - from) / (to - from)) * 100));

/**
 * Permits per pipeline along the window: one row per permit in order of position along the line, its
 * bar spanning its validity window. Overlaps and shared points are striped and say so in words;
 * permits waiting for approval have a dashed outline and say so.
 */
export function PlanTimeline({ from, to, permits, timeZone, unit, now }: Props) {
  const start = Date.parse(from);
  const end = Date.parse(to);
  const days: { day: string; left: number }[] = [];
  for (let day = siteDay(start, timeZone); startOfSiteDay(day, timeZone).getTime() < end && days.length < 70; day = addDays(day, 1)) {
    days.push({ day, left: at(startOfSiteDay(day, timeZone).getTime(), start, end) });
  }
  const today = at(now.getTime(), start, end);
  return (
    <div className="flex flex-col gap-6" data-testid="plan-timeline">
      {byPipeline(permits).map((group) => (
        <section key={group.pipelineId} aria-labelledby={`plan-pipe-${group.pipelineId}`} className="rounded-card border border-line bg-surface p-3">
          <h2 id={`plan-pipe-${group.pipelineId}`} className="text-lg font-bold text-brand-strong">
            {group.pipelineName}
          </h2>
          <div className="overflow-x-auto">
            <div className="relative min-w-[48rem]">
              <div className="relative h-8 border-b border-line text-sm text-ink-soft" aria-hidden>
                {days.map((d) => (
                  <span key={d.day} className="absolute top-1 border-l border-line pl-1" style={{ left: `${d.left}%` }}>
                    {dayLabel(d.day)}
                  </span>
                ))}
              </div>
              <ul className="relative">
                {today > 0 && today < 100 ? <li aria-hidden className="pointer-events-none absolute inset-y-0 z-10 border-l-2 border-brand" style={{ left: `${today}%` }} /> : null}
                {group.permits.map((p) => (
                  <PlanRow key={p.id} permit={p} start={start} end={end} timeZone={timeZone} unit={unit} />
                ))}
              </ul>
            </div>
          </div>
        </section>
      ))}
    </div>
  );
}

function PlanRow({ permit: p, start, end, timeZone, unit }: { permit: PlanPermit; start: number; end: number; timeZone: string; unit: LocationUnit }) {
  const left = at(Date.parse(p.validFrom), start, end);
  const right = at(Date.parse(p.validTo), start, end);
  const flags = permitFlags(p);
  const meets = p.workOverlaps > 0 || p.sharedPoints > 0;
  const bar = [
    'absolute inset-y-1 flex items-center overflow-hidden rounded-md border-2 px-1 text-sm font-semibold text-ink',
    meets
      ? 'border-danger bg-[repeating-linear-gradient(45deg,var(--color-danger-soft)_0,var(--color-danger-soft)_6px,var(--color-surface)_6px,var(--color-surface)_12px)]'
      : 'border-info bg-info-soft',
    p.awaitingApproval ? 'border-dashed' : 'border-solid',
  ].join(' ');
  return (
    <li className="border-b border-line py-1" data-testid="plan-permit" data-overlap={meets ? 'true' : undefined} data-awaiting={p.awaitingApproval ? 'true' : undefined}>
      <p className="flex flex-wrap items-center gap-x-2 text-sm">
        <Link to={`/permits/${p.id}`} className="inline-flex min-h-11 items-center font-semibold whitespace-nowrap">
          {p.number}
        </Link>
        <span>{p.title}</span>
        <span className="text-ink-soft">
          {formatPosition(p.fromPosition, unit)}–{formatPosition(p.toPosition, unit, false)} · {p.contractorName} · {permitStateLabels[p.state]} ·{' '}
          {formatInZone(p.validFrom, timeZone, 'dayTime')} to {formatInZone(p.validTo, timeZone, 'dayTime')}
        </span>
        {flags.map((f) => (
          <span key={f} className={`rounded-md border px-1.5 font-semibold ${f === 'Waiting for approval' ? 'border-dashed border-info' : 'border-danger bg-danger-soft'}`}>
            {f === 'Waiting for approval' ? '◌ ' : '⚠ '}
            {f}
          </span>
        ))}
      </p>
      <div className="relative h-9" aria-hidden>
        <div className={bar} style={{ left: `${left}%`, width: `${Math.max(0.8, right - left)}%` }}>
          {p.number}
        </div>
      </div>
    </li>
  );
}
