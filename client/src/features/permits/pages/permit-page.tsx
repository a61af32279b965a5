import { Link, useParams } from 'react-router-dom';
import { subject } from '@casl/ability';
import { editableStates, finishedStates, liveStates, workKindLabels } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { IsolationPlanSection } from '@client/features/isolations';
import { ChecksSection, GasTestsSection, HandoverSection } from '@client/features/gas-tests';
import { Button } from '@client/components/ui/button';
import { Card, Loading } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { usePermit } from '../api/get-permit';
import { PermitStateBadge } from '../components/permit-state-badge';
import { ValidityCountdown } from '../components/validity-countdown';
import { GasTestDue } from '../components/gas-test-due';
import { PermitActions } from '../components/permit-actions';
import { HotWorkPanel } from '../components/hot-work-panel';
import { PrintPermitLink } from '../components/print-permit-link';
import { JobSection } from '../components/job-section';
import { PlaceSection } from '../components/place-section';
import { CrewSection } from '../components/crew-section';
import { LockboxSection } from '../components/lockbox-section';
import { ChecklistSection } from '../components/checklist-section';
import { SignaturesSection } from '../components/signatures-section';
import { TimelineSection } from '../components/timeline-section';
import { AttachmentsSlot } from '../components/attachments-slot';
import { AttachmentsPanel } from '@client/features/attachments';
import { PermitCertificateLine } from '@client/features/certificates';
import { PermitNotFound } from '../components/permit-not-found';
import { SuspensionNotice } from '../components/suspension-notice';
import { linkButtonClass } from '../components/link-button';
import { useTenantSettings } from '../hooks/use-tenant-settings';

export default function PermitPage() {
  const { id = '' } = useParams();
  const permit = usePermit(id);
  const { data: me } = useMe();
  const ability = useAbility();
  const { timeZone, unit } = useTenantSettings();

  if (permit.isPending) return <Loading label="Loading the permit…" />;
  if (permit.isError) {
    if (permit.error instanceof ApiError && (permit.error.status === 404 || (permit.error.status === 400 && permit.error.code === 'validation_failed'))) return <PermitNotFound />;
    return (
      <Notice tone="danger" role="alert" title="The permit could not be loaded.">
        <p>{permit.error.message}</p>
        <Button variant="secondary" onClick={() => permit.refetch()}>
          Try again
        </Button>
      </Notice>
    );
  }

  const p = permit.data;
  const canEdit = editableStates.includes(p.state) && ability.can('update', subject('Permit', { ...p }));
  const finished = finishedStates.includes(p.state);

  return (
    <div className="flex min-w-0 flex-col gap-4">
      <header className="flex flex-col gap-2">
        <p className="text-sm">
          <Link to="/permits" className="inline-flex min-h-11 items-center">
            ← Permits
          </Link>
        </p>
        <div className="flex flex-wrap items-center gap-3">
          <h1 className="text-2xl font-bold break-words text-brand-strong">
            <span className="whitespace-nowrap">{p.number}</span> <span className="font-semibold">{p.title}</span>
          </h1>
          <PermitStateBadge state={p.state} />
        </div>
        <p className="text-sm text-ink-soft">{p.kinds.map((k) => workKindLabels[k]).join(', ')}</p>
        <p className="flex flex-wrap gap-x-3 gap-y-1">
          {!finished ? <ValidityCountdown validFrom={p.validFrom} validTo={p.validTo} /> : null}
          <span className="text-sm text-ink-soft">
            {formatInZone(p.validFrom, timeZone)} to {formatInZone(p.validTo, timeZone)}
          </span>
          {liveStates.includes(p.state) ? <GasTestDue due={p.nextGasTestDue} timeZone={timeZone} /> : null}
        </p>
      </header>

      {editableStates.includes(p.state) && p.rejectionReason ? (
        <Notice tone="caution" title="Sent back by the authoriser" role="status">
          <p className="break-words whitespace-pre-line">{p.rejectionReason}</p>
        </Notice>
      ) : null}

      <SuspensionNotice permit={p} timeZone={timeZone} />

      {p.workOverlaps.length ? (
        <Notice tone="caution" title="Other work on the same stretch of line" role="status">
          <ul className="list-disc pl-5 text-sm" data-testid="work-overlaps">
            {p.workOverlaps.map((o) => (
              <li key={o.permitNumber}>{o.message}.</li>
            ))}
          </ul>
          <p className="text-sm">Check the two jobs, their isolations and their crews are planned together before either goes ahead.</p>
        </Notice>
      ) : null}

      <div className="grid min-w-0 gap-4 lg:grid-cols-3">
        <aside className="flex min-w-0 flex-col gap-4 lg:order-2" aria-label="Actions on this permit">
          <Card>
            <h2 className="mb-3 text-lg font-semibold">What you can do now</h2>
            <div className="flex flex-col gap-3">
              {canEdit ? (
                <Link to={`/permits/${p.id}/edit`} className={`${linkButtonClass.secondary} w-full`}>
                  Edit draft
                </Link>
              ) : null}
              <PermitActions permit={p} userName={me?.user.name ?? ''} timeZone={timeZone} onConflict={() => void permit.refetch()} />
              <HotWorkPanel permit={p} timeZone={timeZone} />
              <PrintPermitLink permit={p} />
              <PermitCertificateLine permitId={p.id} />
            </div>
          </Card>
          <SafetyCaution>{p.kinds.includes('hot_work') || p.kinds.includes('confined_space') ? 'Hazardous work: check the gas tests and isolations on site before every step. ' : null}</SafetyCaution>
        </aside>
        <div className="flex min-w-0 flex-col gap-4 lg:order-1 lg:col-span-2">
          <JobSection permit={p} />
          {/* The isolation plan section draws the line with the isolation envelope, so Place leaves its strip out. */}
          <PlaceSection permit={p} unit={unit} showStrip={false} />
          <IsolationPlanSection permit={p} />
          <CrewSection permit={p} />
          <LockboxSection permit={p} userId={me?.user.id ?? ''} userName={me?.user.name ?? ''} timeZone={timeZone} />
          <ChecklistSection permit={p} timeZone={timeZone} />
          <GasTestsSection permit={p} />
          <ChecksSection permit={p} />
          <HandoverSection permit={p} />
          <SignaturesSection permit={p} timeZone={timeZone} />
          <TimelineSection permit={p} timeZone={timeZone} />
          <AttachmentsSlot permitId={p.id}><AttachmentsPanel permit={p} /></AttachmentsSlot>
        </div>
      </div>
    </div>
  );
}
