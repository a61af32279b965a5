import { productLabels } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import type { PipelineDetail, PipelineSummary } from '@shared/assets/types';

const scheduleText = (s: string | null) => (s === null ? null : s === 'STD' || s === 'XS' ? s : `Sch ${s}`);

export function sizeText(p: Pick<PipelineSummary, 'nps' | 'schedule' | 'insideDiameterIn'>) {
  return [`NPS ${p.nps}`, scheduleText(p.schedule), `ID ${p.insideDiameterIn.toFixed(3)} in`].filter(Boolean).join(' · ');
}

const boreSource = { schedule: 'from the ASME B36.10M table', wall: 'outside diameter less twice the wall', explicit: 'measured' };

export function PipelineFacts({ pipeline: p }: { pipeline: PipelineDetail }) {
  const rows: [string, string][] = [
    ['Code', p.code],
    ['Product', productLabels[p.product]],
    ['Nominal size', `NPS ${p.nps}${p.schedule ? `, ${scheduleText(p.schedule)}` : ''}${p.wallThicknessIn ? `, wall ${p.wallThicknessIn.toFixed(3)} in` : ''}`],
    ['Outside diameter', p.outsideDiameterIn ? `${p.outsideDiameterIn.toFixed(3)} in` : 'not in the table'],
    ['Inside diameter', `${p.insideDiameterIn.toFixed(3)} in (${boreSource[p.insideDiameterSource]})`],
    ['Maximum operating pressure', `${p.mopPsig.toLocaleString('en-US')} psig`],
    ['Runs', `${formatPosition(p.startPosition, p.unit)} to ${formatPosition(p.endPosition, p.unit)}`],
  ];
  return (
    <dl className="grid gap-x-4 gap-y-2 text-sm sm:grid-cols-[auto_1fr] xl:grid-cols-[auto_1fr_auto_1fr]">
      {rows.map(([k, v]) => (
        <div key={k} className="contents">
          <dt className="font-semibold">{k}</dt>
          <dd>{v}</dd>
        </div>
      ))}
      {p.notes ? (
        <div className="contents">
          <dt className="font-semibold">Notes</dt>
          <dd className="whitespace-pre-line">{p.notes}</dd>
        </div>
      ) : null}
      <div className="contents">
        <dt className="font-semibold">Sites</dt>
        <dd>{p.sites.length ? p.sites.map((s) => `${s.name} (${formatPosition(s.position, p.unit)})`).join(', ') : 'None recorded'}</dd>
      </div>
    </dl>
  );
}
