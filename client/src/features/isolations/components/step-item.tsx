import type { ReactNode } from 'react';
import { subject } from '@casl/ability';
import { conditionLabels, verificationLabels } from '@shared/schemas/isolation.schema';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import type { PermitState } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { Can, useAbility } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { EnteredLate } from '@client/components/ui/entered-late';
import type { IsolationStep } from '@shared/types/isolations';
import { isInPlace, stepActions } from '@shared/isolations/step-rules';
import { mayHandOver, removalNeedsException } from '@shared/isolations/lockout-rules';
import { acknowledgeButtonLabels, type AcknowledgeWhat } from './acknowledge-dialog';
import { LineStopRecord } from './line-stop-record';
import { PlugRecord } from './plug-record';
import { StepKindTag, StepStatusBadge } from './step-badges';

/** `signed`: a removal of someone else's lock under a recorded exception, which the remover signs. */
export type StepDialog =
  | { kind: 'apply' | 'verify' | 'exception' | 'handover'; step: IsolationStep }
  | { kind: 'remove'; step: IsolationStep; signed?: boolean }
  | { kind: 'acknowledge'; step: IsolationStep; what: AcknowledgeWhat };

export interface StepPermit {
  id: string;
  tenantId: string;
  state: PermitState;
  contractorOrganisationId: string;
}

interface Props {
  permit: StepPermit;
  step: IsolationStep;
  unit: LocationUnit;
  timeZone: string;
  /** The signed-in person: a lock or tag someone else put on is theirs to take off only under the exception procedure. */
  userId: string;
  onAction: (dialog: StepDialog) => void;
}

function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="min-w-0">
      <dt className="text-xs font-semibold text-ink-soft">{label}</dt>
      <dd className="text-sm break-words">{children}</dd>
    </div>
  );
}

const reading = (s: IsolationStep) => (s.verificationReading !== null ? `: ${s.verificationReading} ${s.verificationUnit ?? ''}`.trimEnd() : '');

/** One step of the plan: what it is, what has been done to it and by whom, and what may be done next. */
export function StepItem({ permit, step, unit, timeZone, userId, onAction }: Props) {
  const fit = stepActions(step, permit.state);
  const ability = useAbility();
  const othersDevice = fit.remove && removalNeedsException(step, userId);
  const stepSubject = subject('IsolationStep', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId });
  const permitSubject = subject('Permit', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId });
  const at = (iso: string | null) => formatInZone(iso, timeZone);
  const inPlace = isInPlace(step.status);
  // A technician who did not put the lock on, and the authoriser who records the exception, both come through the exception procedure.
  const mayUseException = othersDevice && (ability.can('remove', stepSubject) || ability.can('approve', stepSubject));

  return (
    <li className="flex min-w-0 flex-col gap-3 rounded-card border border-line bg-surface p-3" data-testid="isolation-step" data-label={step.label} data-status={step.status} aria-labelledby={`step-${step.id}`}>
      <div className="flex flex-wrap items-center gap-2">
        <span className="inline-flex size-7 items-center justify-center rounded-full bg-brand text-sm font-bold text-white" aria-hidden>
          {step.seq}
        </span>
        <h3 id={`step-${step.id}`} tabIndex={-1} className="text-base font-bold break-all text-brand-strong">
          <span className="sr-only">Step {step.seq}: </span>
          {step.label}
        </h3>
        <StepKindTag kind={step.kind} />
        <StepStatusBadge status={step.status} />
        {step.remotelyOperable ? <span className="text-sm font-medium text-info">Can be operated remotely</span> : null}
      </div>
      <dl className="grid grid-cols-1 gap-x-4 gap-y-2 sm:grid-cols-2 lg:grid-cols-3">
        <Fact label="Position">{formatPosition(step.position, unit)}</Fact>
        <Fact label="Required condition">{conditionLabels[step.condition]}</Fact>
        {step.lockNumber || step.tagNumber ? (
          <Fact label="Lock / tag">
            <span data-testid="step-lock">{step.lockNumber ?? '—'}</span> / {step.tagNumber ?? '—'}
          </Fact>
        ) : null}
        {step.appliedAt ? (
          <Fact label="Applied">
            {step.appliedByName}, {at(step.appliedAt)}
            {step.appliedEnteredLate ? <EnteredLate /> : null}
            {step.appliedOutOfOrderReason ? <span className="block text-ink-soft">Out of the plan&apos;s order: {step.appliedOutOfOrderReason}</span> : null}
          </Fact>
        ) : null}
        {step.handedOverAt ? (
          <Fact label="Held by">
            {step.heldByName}, handed over {at(step.handedOverAt)}
          </Fact>
        ) : null}
        {step.remotelyOperable && step.appliedAt ? (
          <Fact label="Remote operation inhibited">{step.remoteAckAt ? `${step.remoteAckByName ?? 'Control room'}, ${at(step.remoteAckAt)}` : <span className="font-semibold text-danger">Not yet acknowledged by the control room</span>}</Fact>
        ) : null}
        {step.verifiedAt ? (
          <Fact label="Verified">
            {step.verifiedByName}, {at(step.verifiedAt)} — {verificationLabels[step.verificationMethod as keyof typeof verificationLabels] ?? step.verificationMethod}
            {reading(step)}
            {step.verificationNotes ? <span className="block text-ink-soft">{step.verificationNotes}</span> : null}
          </Fact>
        ) : inPlace ? (
          <Fact label="Verified">
            <span className="font-semibold">Waiting for a second person</span>
          </Fact>
        ) : null}
        {step.appliedAt ? (
          <Fact label="Control room">
            {step.controlRoomAckAppliedAt ? `Applied acknowledged ${at(step.controlRoomAckAppliedAt)}` : 'Applied not yet acknowledged'}
            {step.status === 'removed' ? `; ${step.controlRoomAckRemovedAt ? `removal acknowledged ${at(step.controlRoomAckRemovedAt)}` : 'removal not yet acknowledged'}` : ''}
          </Fact>
        ) : null}
        {step.removedAt ? (
          <Fact label="Removed">
            {step.removedByName}, {at(step.removedAt)}
            {step.removalNote ? <span className="block text-ink-soft">{step.removalNote}</span> : null}
            {step.removedUnderException ? <span className="block font-semibold">Under the exception procedure, authorised by {step.exceptionAuthoriserName}</span> : null}
          </Fact>
        ) : step.exceptionRecordedAt ? (
          <Fact label="Exception recorded">
            {step.exceptionAuthoriserName}, {at(step.exceptionRecordedAt)}: {step.heldByName} is away; another technician may take the lock off and sign for it
          </Fact>
        ) : null}
      </dl>
      {step.kind === 'plug' ? <PlugRecord step={step} timeZone={timeZone} /> : null}
      {step.kind === 'line_stop' ? <LineStopRecord step={step} timeZone={timeZone} /> : null}
      <div className="flex flex-wrap gap-2">
        {fit.apply ? (
          <Can I="apply" this={stepSubject}>
            <Button aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'apply', step })}>Apply</Button>
          </Can>
        ) : null}
        {fit.verify ? (
          <Can I="verify" this={stepSubject}>
            <Button aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'verify', step })}>Verify</Button>
          </Can>
        ) : null}
        {fit.acknowledgeRemote ? (
          <Can I="acknowledge" this={stepSubject}>
            <Button variant="secondary" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'acknowledge', step, what: 'remote_inhibited' })}>
              {acknowledgeButtonLabels.remote_inhibited}
            </Button>
          </Can>
        ) : null}
        {fit.acknowledgeApplied ? (
          <Can I="acknowledge" this={stepSubject}>
            <Button variant="secondary" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'acknowledge', step, what: 'applied' })}>
              {acknowledgeButtonLabels.applied}
            </Button>
          </Can>
        ) : null}
        {fit.acknowledgeRemoved ? (
          <Can I="acknowledge" this={stepSubject}>
            <Button variant="secondary" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'acknowledge', step, what: 'removed' })}>
              {acknowledgeButtonLabels.removed}
            </Button>
          </Can>
        ) : null}
        {fit.acknowledgePlugWarnings ? (
          <Can I="approve" this={permitSubject}>
            <Button variant="secondary" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'acknowledge', step, what: 'plug_warnings' })}>
              {acknowledgeButtonLabels.plug_warnings}
            </Button>
          </Can>
        ) : null}
        {fit.remove && !othersDevice ? (
          <Can I="remove" this={stepSubject}>
            <Button variant="danger" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'remove', step })}>
              Remove
            </Button>
          </Can>
        ) : null}
        {mayHandOver(step, userId) ? (
          <Button variant="secondary" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'handover', step })}>
            Hand over my lock
          </Button>
        ) : null}
        {mayUseException ? (
          <Button variant="danger" aria-describedby={`step-${step.id}`} onClick={() => onAction({ kind: 'exception', step })}>
            Remove under the exception procedure
          </Button>
        ) : null}
      </div>
    </li>
  );
}
