import { useState } from 'react';
import { subject } from '@casl/ability';
import { conditionLabels } from '@shared/schemas/isolation.schema';
import type { IsolationStep } from '@shared/types/isolations';
import { stepActions } from '@shared/isolations/step-rules';
import { removalNeedsException } from '@shared/isolations/lockout-rules';
import { useAbility } from '@client/lib/ability';
import { Notice } from '@client/components/ui/notice';
import { useIsolationPlan } from '../api/get-isolation-plan';
import { ApplyStepForm } from './apply-dialog';
import { VerifyIntro, VerifyStepForm } from './verify-dialog';
import { removeIntro, RemoveStepForm } from './remove-dialog';
import type { StepPermit } from './step-item';

export const stepTaskActions = ['apply', 'verify', 'remove'] as const;
export type StepTaskAction = (typeof stepTaskActions)[number];

export const stepTaskLabels: Record<StepTaskAction, string> = { apply: 'Apply', verify: 'Verify', remove: 'Remove' };

/** Whether this person may take `action` on the step now: the step's own rules, their role, and whose lock it is. */
function useMayAct(permit: StepPermit, userId: string) {
  const ability = useAbility();
  const stepSubject = subject('IsolationStep', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId });
  return (step: IsolationStep, action: StepTaskAction) => {
    if (!stepActions(step, permit.state)[action] || !ability.can(action, stepSubject)) return false;
    // Someone else's lock comes off only under a recorded exception, signed by the one who takes it off.
    if (action === 'remove' && removalNeedsException(step, userId)) return step.exceptionRecordedAt !== null;
    // The second person verifies: never the one who applied it.
    if (action === 'verify') return step.appliedBy !== userId;
    return true;
  };
}

/** The isolation steps this person may apply, verify or remove now, in plan order. */
export function useStepTasks(permit: StepPermit, userId: string): { step: IsolationStep; action: StepTaskAction }[] {
  const plan = useIsolationPlan(permit.id);
  const may = useMayAct(permit, userId);
  return (plan.data?.items ?? []).flatMap((step) => stepTaskActions.filter((a) => may(step, a)).map((action) => ({ step, action })));
}

/** One step of the plan, with the whole plan (the order rules need it). */
export function useIsolationStep(permitId: string, stepId: string) {
  const plan = useIsolationPlan(permitId);
  const steps = plan.data?.items ?? [];
  return { plan, steps, step: steps.find((s) => s.id === stepId) ?? null };
}

interface TaskProps {
  permit: StepPermit;
  step: IsolationStep;
  steps: IsolationStep[];
  action: StepTaskAction;
  user: { id: string; name: string };
  timeZone: string;
  onDone: () => void;
  onCancel: () => void;
}

/** One step's apply, verify or removal as a task screen's body: the same forms as the plan's dialogs. */
export function StepTaskForm({ permit, step, steps, action, user, timeZone, onDone, onCancel }: TaskProps) {
  const may = useMayAct(permit, user.id);
  const mayNow = may(step, action);
  // Once the form is open it stays until it is done: the step's new state arrives before the answer's callbacks run.
  const [opened, setOpened] = useState(false);
  if (mayNow && !opened) setOpened(true);
  if (!mayNow && !opened) {
    return (
      <Notice tone="caution" role="status" title="Not possible now">
        You cannot {stepTaskLabels[action].toLowerCase()} {step.label} now. Go back to the permit to see what it waits for.
      </Notice>
    );
  }
  if (action === 'apply')
    return (
      <>
        <p className="text-sm">Required condition: {conditionLabels[step.condition]}.</p>
        <ApplyStepForm permitId={permit.id} step={step} steps={steps} timeZone={timeZone} onDone={onDone} onCancel={onCancel} screen />
      </>
    );
  if (action === 'verify')
    return (
      <>
        <div className="text-sm">
          <VerifyIntro step={step} timeZone={timeZone} />
        </div>
        <VerifyStepForm permitId={permit.id} step={step} onDone={onDone} onCancel={onCancel} screen />
      </>
    );
  const signer = removalNeedsException(step, user.id) ? user.name : undefined;
  return (
    <>
      <p className="text-sm">{removeIntro}</p>
      <RemoveStepForm permitId={permit.id} step={step} steps={steps} signer={signer} onDone={onDone} onCancel={onCancel} screen />
    </>
  );
}
