import { workKindLabels } from '@shared/permit/states';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';
import { Detail, DetailList } from './detail-list';

export function JobSection({ permit }: { permit: PermitDetail }) {
  const hot = permit.kinds.includes('hot_work');
  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Job</h2>
      <DetailList>
        <Detail label="Kinds of work">{permit.kinds.map((k) => workKindLabels[k]).join(', ')}</Detail>
        <Detail label="Job reference">{permit.jobReference}</Detail>
        <Detail label="Scope">{permit.scope}</Detail>
        <Detail label="Method statement">{permit.methodStatement}</Detail>
        <Detail label="Hazards">{permit.hazards}</Detail>
        <Detail label="PPE">
          {permit.ppe.length ? (
            <ul className="flex flex-wrap gap-1">
              {permit.ppe.map((p) => (
                <li key={p} className="rounded-full border border-line bg-brand-soft px-2 py-0.5">
                  {p}
                </li>
              ))}
            </ul>
          ) : null}
        </Detail>
        {hot ? <Detail label="Fire watch">{`${permit.fireWatchMinutes} minutes after hot work stops${permit.fireWatchPerson ? `; ${permit.fireWatchPerson}` : ''}`}</Detail> : null}
        <Detail label="Gas tests">{`Within ${permit.gasTestWindowMinutes} minutes before work starts, then every ${permit.gasTestIntervalMinutes} minutes`}</Detail>
      </DetailList>
    </Card>
  );
}
