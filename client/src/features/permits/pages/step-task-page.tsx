import { useNavigate, useParams } from 'react-router-dom';
import type { PermitDetail } from '@shared/types/permits';
import { StepTaskForm, stepTaskActions, stepTaskLabels, useIsolationStep, type StepTaskAction } from '@client/features/isolations';
import { useMe } from '@client/features/auth';
import { Loading } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { TaskScreen } from '../components/task-screen';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { useWatchPermit } from '@client/lib/live';

const actionOf = (raw: string | undefined): StepTaskAction | undefined => stepTaskActions.find((a) => a === raw);

function StepTask({ permit, stepId, action }: { permit: PermitDetail; stepId: string; action: StepTaskAction }) {
  const { plan, step, steps } = useIsolationStep(permit.id, stepId);
  const { data: me } = useMe();
  const { timeZone } = useTenantSettings();
  const navigate = useNavigate();
  const back = () => navigate(`/permits/${encodeURIComponent(permit.id)}`);
  if (plan.isPending) return <Loading label="Loading the isolation plan…" />;
  if (plan.isError) return <Notice tone="danger" role="alert">{plan.error.message}</Notice>;
  if (!step) return <Notice tone="caution" role="status">This isolation is not in the permit&apos;s plan.</Notice>;
  return <StepTaskForm permit={permit} step={step} steps={steps} action={action} user={{ id: me?.user.id ?? '', name: me?.user.name ?? '' }} timeZone={timeZone} onDone={back} onCancel={back} />;
}

/** /permits/:id/steps/:stepId/apply|verify|remove: one isolation step's application, verification or removal. */
export default function StepTaskPage() {
  const { id = '', stepId = '', action: raw } = useParams();
  useWatchPermit(id);
  const action = actionOf(raw);
  const { step } = useIsolationStep(id, stepId);
  return (
    <TaskScreen
      permitId={id}
      title={() => (action ? `${stepTaskLabels[action]} ${step?.label ?? 'an isolation'}` : 'Isolation step')}
      caution="Apply and verify each isolation in the plan's order and take them off in reverse. Check an isolation on site before relying on it. "
    >
      {(permit) =>
        action ? <StepTask permit={permit} stepId={stepId} action={action} /> : <Notice tone="caution" role="status">There is no such step task. Go back to the permit.</Notice>
      }
    </TaskScreen>
  );
}
