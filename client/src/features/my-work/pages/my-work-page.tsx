import { Link } from 'react-router-dom';
import { roleLabels } from '@shared/abilities/roles';
import { formatInZone } from '@shared/time/zone';
import type { MyWork } from '@shared/types/my-work';
import { Button } from '@client/components/ui/button';
import { Card, Loading, PageHeader } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useMe } from '@client/features/auth';
import { useNow } from '@client/features/permits';
import { myWorkKey, useMyWork } from '../api/get-my-work';
import { GasWorkRow, LiveWorkRow, PermitWorkRow, StepWorkRow, WorkList } from '../components/work-rows';
import { permitIdsIn, useWatchPermits } from '@client/lib/live';

function RoleSection({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <section aria-label={title} className="flex flex-col gap-3">
      <h2 className="text-xl font-bold text-brand-strong">{title}</h2>
      <div className="grid gap-4 lg:grid-cols-2">{children}</div>
    </section>
  );
}

function Lists({ work, timeZone }: { work: MyWork; timeZone: string }) {
  const now = useNow(15_000);
  const { counts } = work;
  return (
    <>
      {work.gasTester ? (
        <RoleSection title="Gas testing">
          <WorkList id="gas-tests" title="Gas tests due" count={counts.gasTestsDue} empty="No gas tests due: no live work needs a repeat test.">
            {work.gasTester.gasTestsDue.map((g) => (
              <GasWorkRow key={g.permit.id} item={g} timeZone={timeZone} />
            ))}
          </WorkList>
        </RoleSection>
      ) : null}
      {work.lead ? (
        <RoleSection title="Contractor lead">
          <WorkList id="live-work" title="Your live work" count={counts.liveWork} empty="You hold no permit with work under way.">
            {work.lead.liveWork.map((p) => (
              <LiveWorkRow key={p.permit.id} item={p} timeZone={timeZone} now={now} />
            ))}
          </WorkList>
          <WorkList id="to-accept" title="Permits to accept" count={counts.toAccept} empty="No approved permits are waiting for you to accept.">
            {work.lead.toAccept.map((p) => (
              <PermitWorkRow key={p.permit.id} item={p} doing={`approved; valid until ${formatInZone(p.validTo, timeZone, 'dayTime')}`} />
            ))}
          </WorkList>
          <WorkList id="sent-back" title="Sent back to you" count={counts.sentBack} empty="No permits have been sent back to you.">
            {work.lead.sentBack.map((p) => (
              <PermitWorkRow key={p.permit.id} item={p} doing="change it and send it again" />
            ))}
          </WorkList>
        </RoleSection>
      ) : null}
      {work.technician ? (
        <RoleSection title="Isolations">
          <WorkList id="steps-apply" title="Isolations to apply" count={counts.stepsToApply} empty="Nothing to apply: no accepted permit of yours has isolations waiting.">
            {work.technician.stepsToApply.map((s) => (
              <StepWorkRow key={s.stepId} item={s} />
            ))}
          </WorkList>
          <WorkList id="steps-verify" title="Isolations to verify" count={counts.stepsToVerify} empty="Nothing to verify: no isolation applied by someone else is waiting for a second check.">
            {work.technician.stepsToVerify.map((s) => (
              <StepWorkRow key={s.stepId} item={s} />
            ))}
          </WorkList>
          <WorkList id="steps-remove" title="Isolations to remove" count={counts.stepsToRemove} empty="Nothing to remove: no permit has been handed back with your isolations on.">
            {work.technician.stepsToRemove.map((s) => (
              <StepWorkRow key={s.stepId} item={s} />
            ))}
          </WorkList>
        </RoleSection>
      ) : null}
      {work.authoriser ? (
        <RoleSection title="Authoriser">
          <WorkList id="to-approve" title="Permits waiting for approval" count={counts.toApprove} empty="No permits are waiting for your approval.">
            {work.authoriser.toApprove.map((p) => (
              <PermitWorkRow key={p.permit.id} item={p} doing={`sent for approval; valid until ${formatInZone(p.validTo, timeZone, 'dayTime')}`} />
            ))}
          </WorkList>
          <WorkList id="plug-warnings" title="Plug warnings to acknowledge" count={counts.plugWarnings} empty="No plug has been built outside the rules.">
            {work.authoriser.plugWarnings.map((s) => (
              <StepWorkRow key={s.stepId} item={s} />
            ))}
          </WorkList>
          <WorkList id="to-revalidate" title="Suspended, waiting for re-validation" count={counts.toRevalidate} empty="No stopped or expired permit is waiting for you.">
            {work.authoriser.toRevalidate.map((p) => (
              <PermitWorkRow key={p.permit.id} item={p} doing="check the site, then re-validate or let work resume" />
            ))}
          </WorkList>
        </RoleSection>
      ) : null}
      {work.controlRoom ? (
        <RoleSection title="Control room">
          <WorkList id="to-acknowledge" title="Isolations to acknowledge" count={counts.isolationsToAcknowledge} empty="Every isolation on the line has been acknowledged.">
            {work.controlRoom.isolationsToAcknowledge.map((s) => (
              <StepWorkRow key={`${s.stepId}-${s.action}`} item={s} />
            ))}
          </WorkList>
          <WorkList id="returns" title="Returns to service to acknowledge" count={counts.returnsToAcknowledge} empty="No line is waiting for you to acknowledge its return to service.">
            {work.controlRoom.returnsToAcknowledge.map((p) => (
              <PermitWorkRow key={p.permit.id} item={p} doing="returned to service; acknowledge so it can close" />
            ))}
          </WorkList>
          <p>
            <Link to="/board?unacknowledged=true" className="inline-flex min-h-11 items-center font-semibold">
              Open the live board, not acknowledged only
            </Link>
          </p>
        </RoleSection>
      ) : null}
    </>
  );
}

/** The start page: what waits for the signed-in person now, per role, most urgent first. */
export default function MyWorkPage({ whereToGo }: { whereToGo?: React.ReactNode }) {
  const { data: me } = useMe();
  const work = useMyWork();
  useWatchPermits(permitIdsIn(work.data), [myWorkKey]);
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const roles = me?.memberships.filter((m) => m.tenantId === me.activeTenantId) ?? [];
  const holdsLists = work.data && (work.data.lead || work.data.technician || work.data.gasTester || work.data.authoriser || work.data.controlRoom);
  return (
    <>
      <PageHeader
        title="My work"
        subtitle={
          <>
            {me?.user.name} — {roles.map((r) => `${roleLabels[r.role]} (${r.organisationName})`).join(', ')}
            {work.data ? <span className="block">As of {formatInZone(work.data.generatedAt, timeZone, 'dayTime')}</span> : null}
          </>
        }
      />
      <div className="flex flex-col gap-6">
        <SafetyCaution>Check on site before you act on any item here. </SafetyCaution>
        {work.isPending ? (
          <Loading label="Finding what is waiting for you…" />
        ) : work.isError && !work.data ? (
          <Notice tone="danger" role="alert" title="Your work could not be loaded.">
            <p>{work.error.message}</p>
            <Button variant="secondary" onClick={() => void work.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : work.data && holdsLists ? (
          <>
            <p className="text-lg" aria-live="polite" data-testid="my-work-total">
              {work.data.total === 0 ? 'Nothing is waiting for you right now.' : work.data.total === 1 ? '1 thing is waiting for you.' : `${work.data.total} things are waiting for you.`}
            </p>
            <Lists work={work.data} timeZone={timeZone} />
          </>
        ) : (
          <p className="text-lg">Your role has no work lists here. Use the places below.</p>
        )}
        {whereToGo ? <Card>{whereToGo}</Card> : null}
      </div>
    </>
  );
}
