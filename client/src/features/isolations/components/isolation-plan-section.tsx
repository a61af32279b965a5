import { useState } from 'react';
import { subject } from '@casl/ability';
import { editableStates, type PermitState } from '@shared/permit/states';
import { isInPlace } from '@shared/isolations/step-rules';
import { noDeadEnds } from '@shared/isolations/readiness';
import { useAbility } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { Card, Loading } from '@client/components/ui/page';
import { SchematicStrip } from '@client/components/schematic/schematic-strip';
import { useMe } from '@client/features/auth';
import { schematicOverlays, usePermitPipeline } from '@client/features/permits';
import { useIsolationPlan } from '../api/get-isolation-plan';
import { usePipelinePoints } from '../api/get-pipeline-points';
import { planRange } from '../lib/step-rules';
import { AcknowledgeDialog } from './acknowledge-dialog';
import { ApplyDialog } from './apply-dialog';
import { PlanEditor } from './plan-editor';
import { PlanNeighbours } from './plan-neighbours';
import { IsolationReadinessPanel } from './isolation-readiness-panel';
import { PrintLabelsLink } from './print-labels-link';
import { RemovalExceptionDialog } from './removal-exception-dialog';
import { RemoveDialog } from './remove-dialog';
import { StepItem, type StepDialog } from './step-item';
import { HandOverLockDialog } from './hand-over-lock-dialog';
import { VerifyDialog } from './verify-dialog';

/** The fields of GET /api/permits/:id this section reads; the whole detail object fits. */
export interface IsolationPlanPermit {
  id: string;
  tenantId: string;
  state: PermitState;
  version: number;
  pipelineId: string;
  fromPosition: number;
  toPosition: number;
  contractorOrganisationId: string;
}

/** Puts the keyboard back on the step when the button that opened a dialog has gone (the step moved on). */
function refocusStep(stepId: string) {
  requestAnimationFrame(() => {
    if (document.activeElement && document.activeElement !== document.body) return;
    document.getElementById(`step-${stepId}`)?.focus();
  });
}

/** The permit's isolation plan: the planner edits it while a draft, then each step is applied, verified, acknowledged and removed. */
export function IsolationPlanSection({ permit }: { permit: IsolationPlanPermit }) {
  const plan = useIsolationPlan(permit.id);
  const pipeline = usePermitPipeline(permit.pipelineId);
  const { data: me } = useMe();
  const ability = useAbility();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const unit = pipeline.data?.unit ?? me?.activeTenant?.locationUnit ?? 'mi';
  const editing = editableStates.includes(permit.state) && ability.can('update', subject('Permit', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId }));
  const points = usePipelinePoints(permit.pipelineId, editing);
  const [dialog, setDialog] = useState<StepDialog | null>(null);

  const steps = plan.data?.items ?? [];
  const overlays = schematicOverlays(permit, steps);
  const inPlace = steps.filter((s) => isInPlace(s.status)).length;
  const verified = steps.filter((s) => s.status === 'verified').length;
  const close = () => {
    if (dialog) refocusStep(dialog.step.id);
    setDialog(null);
  };
  const user = { id: me?.user.id ?? '', name: me?.user.name ?? '' };
  // The dialog shows the step as it is now (an exception recorded meanwhile, say), not as it was when opened.
  const dialogStep = dialog ? (steps.find((s) => s.id === dialog.step.id) ?? dialog.step) : null;
  const stepSubject = subject('IsolationStep', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId });

  return (
    <Card className="flex min-w-0 flex-col gap-4">
      <div data-testid="isolation-plan" className="flex min-w-0 flex-col gap-4">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 className="text-lg font-semibold">Isolation plan</h2>
          {steps.length ? (
            <p className="text-sm text-ink-soft" data-testid="isolation-summary">
              {steps.length} step{steps.length === 1 ? '' : 's'} · {inPlace} in place · {verified} verified
            </p>
          ) : null}
        </div>

        {pipeline.data ? (
          <SchematicStrip
            pipeline={{ startPosition: pipeline.data.startPosition, endPosition: pipeline.data.endPosition, unit: pipeline.data.unit, name: pipeline.data.name }}
            points={pipeline.data.points}
            sites={pipeline.data.sites}
            overlays={overlays}
            initialRange={planRange(overlays.workRange, steps)}
          />
        ) : null}

        {plan.data ? <PlanNeighbours conflicts={plan.data.conflicts} shared={plan.data.shared} /> : null}

        {plan.isPending ? (
          <Loading label="Loading the isolation plan…" />
        ) : plan.isError ? (
          <Notice tone="danger" role="alert" title="The isolation plan could not be loaded.">
            <p>{plan.error.message}</p>
            <Button variant="secondary" onClick={() => void plan.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : editing ? (
          <PlanEditor
            key={steps.map((s) => s.id).join(',')}
            permit={permit}
            steps={steps}
            deadEnds={plan.data?.readiness.deadEnds ?? noDeadEnds}
            points={points.data?.items ?? []}
            insideDiameterIn={pipeline.data?.insideDiameterIn ?? null}
            unit={unit}
          />
        ) : steps.length ? (
          <ol className="flex flex-col gap-3" aria-label="Isolation steps, in the order they are applied">
            {steps.map((step) => (
              <StepItem key={step.id} permit={permit} step={step} unit={unit} timeZone={timeZone} userId={user.id} onAction={setDialog} />
            ))}
          </ol>
        ) : (
          <p className="rounded-card border border-dashed border-line bg-paper px-3 py-4 text-sm text-ink-soft">No isolation plan yet. The planner adds it while the permit is a draft.</p>
        )}
        {!editing && plan.data ? <IsolationReadinessPanel permit={permit} steps={steps} readiness={plan.data.readiness} timeZone={timeZone} /> : null}
        {!editing ? <PrintLabelsLink permitId={permit.id} steps={steps} /> : null}
      </div>

      {dialog?.kind === 'apply' ? <ApplyDialog permitId={permit.id} step={dialog.step} steps={steps} timeZone={timeZone} onClose={close} /> : null}
      {dialog?.kind === 'verify' ? <VerifyDialog permitId={permit.id} step={dialog.step} timeZone={timeZone} onClose={close} /> : null}
      {dialog?.kind === 'remove' ? <RemoveDialog permitId={permit.id} step={dialogStep ?? dialog.step} steps={steps} signer={dialog.signed ? user.name : undefined} onClose={close} /> : null}
      {dialog?.kind === 'exception' ? (
        <RemovalExceptionDialog
          permitId={permit.id}
          step={dialogStep ?? dialog.step}
          user={user}
          mayRecord={ability.can('approve', stepSubject)}
          mayRemove={ability.can('remove', stepSubject)}
          timeZone={timeZone}
          onClose={close}
          onRemove={() => setDialog({ kind: 'remove', step: dialogStep ?? dialog.step, signed: true })}
        />
      ) : null}
      {dialog?.kind === 'handover' ? <HandOverLockDialog permitId={permit.id} step={dialogStep ?? dialog.step} signer={user.name} onClose={close} /> : null}
      {dialog?.kind === 'acknowledge' ? <AcknowledgeDialog permitId={permit.id} step={dialog.step} what={dialog.what} onClose={close} /> : null}
    </Card>
  );
}
