import { useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import type { InventoryKind } from '@shared/assets/inventory-state';
import { labelKindWords, readLabelText, scanPath } from '@shared/assets/label-address';
import { inventoryStateLabels } from '@shared/schemas/assets.schema';
import { stepKindLabels } from '@shared/schemas/isolation.schema';
import { positionText, stepStatusLabels } from '@shared/permit/record-words';
import type { ScanResult } from '@shared/types/labels';
import { formatInZone } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { QrScanButton } from '@client/components/qr-scan-button';
import { Card, Loading, PageHeader } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useMe } from '@client/features/auth';
import { PermitStateBadge } from '@client/features/permits';
import { useScan } from '../api/scan';

const link = {
  primary: 'inline-flex min-h-14 items-center justify-center rounded-md bg-brand px-4 text-lg font-semibold text-white no-underline hover:bg-brand-strong',
  secondary: 'inline-flex min-h-14 items-center justify-center rounded-md border border-line bg-surface px-4 text-lg font-semibold text-ink no-underline hover:bg-brand-soft',
} as const;

const isKind = (k: string | undefined): k is InventoryKind => k === 'lock' || k === 'tag';

/** The step's task screen: an applied isolation is verified next, a verified one is taken off at the end. */
const stepTask = (permitId: string, stepId: string, status: 'applied' | 'verified') =>
  status === 'applied' ? { to: `/permits/${permitId}/steps/${stepId}/verify`, words: 'Verify this isolation' } : { to: `/permits/${permitId}/steps/${stepId}/remove`, words: 'Take this isolation off' };

/** A scanned lock or tag label (`/scan/lock/L-001`), or the scanner itself (`/scan`). */
export default function ScanPage() {
  const params = useParams();
  const navigate = useNavigate();
  const kind = isKind(params.kind) ? params.kind : null;
  const code = params.code?.trim().toUpperCase() ?? '';
  const [unreadable, setUnreadable] = useState(false);
  const scanned = (text: string) => {
    const label = readLabelText(text);
    setUnreadable(!label);
    // A number typed by hand names no kind: it is looked up as a lock first, and the page offers the tag.
    if (label) navigate(scanPath(label.kind ?? kind ?? 'lock', label.number));
  };

  return (
    <>
      <PageHeader title={kind ? `Scanned ${labelKindWords[kind].toLowerCase()}` : 'Scan a label'} subtitle="Each lock and danger tag carries a label with a square code. Scanning it shows the point it is on and its permit." />
      <div className="flex max-w-2xl flex-col gap-4">
        {unreadable ? (
          <Notice tone="caution" role="alert" title="Not a lock or tag label">
            That code is not a Holdpoint label and not a lock or tag number. Scan the label on the lock or tag, or type the number printed on it.
          </Notice>
        ) : null}
        {kind && code ? <ScanAnswer kind={kind} code={code} /> : <Notice>Point the camera at the label on the lock or tag, or type the number printed on it.</Notice>}
        <QrScanButton label={kind ? 'Scan another label' : 'Scan a lock or tag label'} typedLabel="Number on the lock or tag" variant={kind ? 'secondary' : 'primary'} className="min-h-14 text-lg" onResult={scanned} />
        <SafetyCaution>Check the lock and tag on site against what this screen shows before you act on it. </SafetyCaution>
      </div>
    </>
  );
}

function ScanAnswer({ kind, code }: { kind: InventoryKind; code: string }) {
  const scan = useScan(kind, code);
  if (scan.isPending) return <Loading label={`Looking up ${labelKindWords[kind].toLowerCase()} ${code}…`} />;
  if (scan.isError) {
    const missing = scan.error instanceof ApiError && (scan.error.status === 404 || scan.error.status === 400);
    const other: InventoryKind = kind === 'lock' ? 'tag' : 'lock';
    return (
      <Notice tone="caution" role="alert" title={missing ? `No ${labelKindWords[kind].toLowerCase()} numbered ${code}` : 'Could not look it up'}>
        {missing ? (
          <>
            <p>This tenant&apos;s register has no {labelKindWords[kind].toLowerCase()} with that number. Check the number on the label, or scan it again.</p>
            <Link to={scanPath(other, code)} className={`${link.secondary} mt-2`}>
              Look for a {labelKindWords[other].toLowerCase()} {code} instead
            </Link>
          </>
        ) : (
          scan.error.message
        )}
      </Notice>
    );
  }
  return <ScanCard item={scan.data} />;
}

function ScanCard({ item }: { item: ScanResult }) {
  const { data: me } = useMe();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const at = item.placement;
  return (
    <div data-testid="scan-result">
      <Card className="flex flex-col gap-4">
        <div>
          <p className={`text-sm font-bold tracking-wide uppercase ${item.kind === 'tag' ? 'text-danger' : 'text-ink-soft'}`}>{labelKindWords[item.kind]}</p>
          <p className="text-5xl font-bold break-all text-ink" data-testid="scan-number">
            {item.number}
          </p>
          <p className="mt-1 text-lg font-semibold">{inventoryStateLabels[item.state]}</p>
          {item.holderName ? <p className="text-base">Held by {item.holderName}</p> : null}
        </div>
        {at ? (
          <div className="flex flex-col gap-3" data-testid="scan-placement">
            <div>
              <p className="text-sm font-semibold text-ink-soft">On</p>
              <p className="text-3xl font-bold" data-testid="scan-point">
                {at.pointLabel}
              </p>
              {at.pointDescription ? <p className="text-base">{at.pointDescription}</p> : null}
              <p className="text-base">
                {at.pipelineName}, {positionText(at.position, at.unit)}
              </p>
              {at.step ? (
                <p className="text-base">
                  {stepKindLabels[at.step.kind]}: {stepStatusLabels[at.step.status].toLowerCase()}
                  {at.step.appliedByName ? ` by ${at.step.appliedByName}` : ''}
                  {at.step.appliedAt ? `, ${formatInZone(at.step.appliedAt, timeZone)}` : ''}
                </p>
              ) : null}
            </div>
            {at.permit ? (
              <div>
                <p className="text-sm font-semibold text-ink-soft">Permit</p>
                <p className="flex flex-wrap items-center gap-2 text-2xl font-bold" data-testid="scan-permit">
                  {at.permit.number} <PermitStateBadge state={at.permit.state} />
                </p>
                <p className="text-base">{at.permit.title}</p>
              </div>
            ) : (
              <Notice>It is on a permit of another organisation. Ask the authoriser or the control room about it.</Notice>
            )}
            <div className="grid gap-2 sm:grid-cols-2">
              {at.permit && at.step ? (
                <Link to={stepTask(at.permit.id, at.step.id, at.step.status).to} className={link.primary}>
                  {stepTask(at.permit.id, at.step.id, at.step.status).words}
                </Link>
              ) : null}
              {at.permit ? (
                <Link to={`/permits/${at.permit.id}`} className={link.secondary}>
                  Open permit {at.permit.number}
                </Link>
              ) : null}
            </div>
          </div>
        ) : (
          <Notice tone="info" title="On no isolation">
            This {labelKindWords[item.kind].toLowerCase()} is not on any isolation now.
          </Notice>
        )}
      </Card>
    </div>
  );
}
