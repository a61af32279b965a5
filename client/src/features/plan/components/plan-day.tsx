import { Link } from 'react-router-dom';
import { formatPosition } from '@shared/assets/format';
import { permitStateLabels } from '@shared/permit/states';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { planOverlapsPerPermit } from '@shared/schemas/plan.schema';
import { endOfSiteDay, formatInZone, startOfSiteDay } from '@shared/time/zone';
import type { PlanOverlap, PlanPermit } from '@shared/types/plan';
import { overlapWords, permitFlags } from '../lib/plan-words';

interface Props {
  day: string;
  permits: PlanPermit[];
  overlaps: PlanOverlap[];
  /** Meetings in the plan's weeks that the answer counts without listing. */
  overlapsMore: number;
  timeZone: string;
  unit: LocationUnit;
}

/** "Thursday 3 December 2026" from a site day (a calendar date: no zone involved). */
const dayTitle = (day: string) => new Date(`${day}T12:00:00Z`).toLocaleDateString('en-GB', { timeZone: 'UTC', weekday: 'long', day: 'numeric', month: 'long', year: 'numeric' });

const meetsDay = (from: string, to: string, dayStart: number, dayEnd: number) => Date.parse(from) < dayEnd && Date.parse(to) > dayStart;

/** One site day for the morning meeting: the permits open that day and where they meet, printable as it stands. */
export function PlanDay({ day, permits, overlaps, overlapsMore, timeZone, unit }: Props) {
  const dayStart = startOfSiteDay(day, timeZone).getTime();
  const dayEnd = endOfSiteDay(day, timeZone).getTime();
  const open = permits.filter((p) => meetsDay(p.validFrom, p.validTo, dayStart, dayEnd));
  const meeting = overlaps.filter((o) => meetsDay(o.from, o.to, dayStart, dayEnd));
  return (
    <section aria-labelledby="plan-day-title" className="flex flex-col gap-3 rounded-card border border-line bg-surface p-3" data-testid="plan-day">
      <h2 id="plan-day-title" className="text-lg font-bold text-brand-strong">
        Morning meeting: {dayTitle(day)}
      </h2>
      <p className="text-sm">
        {open.length} permit{open.length === 1 ? '' : 's'} open this day, {meeting.length} place{meeting.length === 1 ? '' : 's'} where permits meet
        {overlapsMore ? ' listed' : ''}.
      </p>
      {overlapsMore ? (
        <p className="text-sm">
          Not every place is listed: where a permit meets more than {planOverlapsPerPermit} others, only the first {planOverlapsPerPermit} by permit number are named. The count
          beside each permit below is the full number.
        </p>
      ) : null}
      {meeting.length ? (
        <div>
          <h3 className="font-semibold">Where permits meet</h3>
          <ul className="list-disc pl-6">
            {meeting.map((o) => (
              <li key={`${o.kind}-${o.first.id}-${o.second.id}-${o.pointLabel ?? ''}`}>
                <strong>{o.kind === 'shared_point' ? 'Shared point: ' : 'Overlapping work: '}</strong>
                {overlapWords(o, unit, timeZone)}
              </li>
            ))}
          </ul>
        </div>
      ) : null}
      {open.length ? (
        <div className="overflow-x-auto">
          <table className="w-full min-w-[40rem] text-left text-sm">
            <thead>
              <tr className="border-b border-line">
                <th scope="col" className="py-2 pr-2">Permit</th>
                <th scope="col" className="py-2 pr-2">Where</th>
                <th scope="col" className="py-2 pr-2">Contractor</th>
                <th scope="col" className="py-2 pr-2">Valid</th>
                <th scope="col" className="py-2 pr-2">State</th>
                <th scope="col" className="py-2">To note</th>
              </tr>
            </thead>
            <tbody>
              {open.map((p) => (
                <tr key={p.id} className="border-b border-line align-top">
                  <td className="py-1 pr-2">
                    <Link to={`/permits/${p.id}`} className="inline-flex min-h-11 items-center font-semibold">
                      {p.number}
                    </Link>
                    <div>{p.title}</div>
                  </td>
                  <td className="py-1 pr-2">
                    {p.pipelineName}, {formatPosition(p.fromPosition, unit)}–{formatPosition(p.toPosition, unit, false)}
                  </td>
                  <td className="py-1 pr-2">{p.contractorName}</td>
                  <td className="py-1 pr-2">
                    {formatInZone(p.validFrom, timeZone, 'dayTime')} to {formatInZone(p.validTo, timeZone, 'dayTime')}
                  </td>
                  <td className="py-1 pr-2">{permitStateLabels[p.state]}</td>
                  <td className="py-1">{permitFlags(p).join('; ') || '—'}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </section>
  );
}
