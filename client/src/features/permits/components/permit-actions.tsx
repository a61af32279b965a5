import { useId, useState } from 'react';
import type { PermitEvent } from '@shared/permit/state-machine';
import { permitStateLabels } from '@shared/permit/states';
import { Button } from '@client/components/ui/button';
import { useConnection } from '@client/lib/connection';
import { useToast } from '@client/components/ui/toast';
import type { PermitAction, PermitDetail } from '@shared/types/permits';
import { TransitionDialog, type TransitionOutcome } from './transition-dialog';

interface Props {
  permit: PermitDetail;
  userName: string;
  timeZone: string;
  onConflict: () => void;
}

// Each of these lets people work (or says the line is safe again): only the server, there and then, may decide it.
const grantsPermission: readonly PermitEvent[] = ['approve', 'accept', 'confirm_isolated', 'start_work', 'resume', 'revalidate', 'hand_back', 'return_to_service', 'acknowledge_return', 'close'];
export const offlineReason = (event: PermitEvent) => (grantsPermission.includes(event) ? 'Needs a connection: this grants permission to work.' : 'Needs a connection to Holdpoint.');

function ActionItem({ action, refusal, onOpen }: { action: PermitAction; refusal?: string[]; onOpen: () => void }) {
  const reasonsId = useId();
  const { online } = useConnection();
  const reasons = !online ? [offlineReason(action.event)] : action.allowed ? refusal : action.reasons;
  return (
    <li className="flex flex-col gap-1" data-testid={`action-${action.event}`}>
      <Button
        type="button"
        variant={action.event === 'cancel' || action.event === 'suspend' ? 'danger' : action.event === 'reject' ? 'secondary' : 'primary'}
        disabled={!action.allowed || !online}
        aria-describedby={reasons?.length ? reasonsId : undefined}
        onClick={onOpen}
        className="w-full justify-center"
      >
        {action.label}
      </Button>
      {reasons?.length ? (
        <div id={reasonsId} role={refusal ? 'alert' : undefined} className={`rounded-md border-l-4 px-3 py-2 text-sm ${refusal ? 'border-danger bg-danger-soft' : 'border-caution bg-caution-soft'}`}>
          <p className="font-semibold">{!online ? 'Not available offline:' : refusal ? 'Holdpoint refused this step:' : 'Not possible yet:'}</p>
          <ul className="list-disc pl-5">
            {reasons.map((r) => (
              <li key={r} className="break-words">
                {r}
              </li>
            ))}
          </ul>
        </div>
      ) : null}
    </li>
  );
}

/** What this person may do next, as the server worked it out; blocked steps stay visible with what is missing. */
export function PermitActions({ permit, userName, timeZone, onConflict }: Props) {
  const [open, setOpen] = useState<PermitAction | null>(null);
  const [refusals, setRefusals] = useState<{ version: number; byEvent: Partial<Record<PermitEvent, string[]>> }>({ version: permit.version, byEvent: {} });
  const toast = useToast();
  const byEvent = refusals.version === permit.version ? refusals.byEvent : {};

  const onOutcome = (action: PermitAction, outcome: TransitionOutcome) => {
    setOpen(null);
    if (outcome.kind === 'done') {
      toast('success', `${action.label}: done. The permit is now ${permitStateLabels[outcome.permit.state].toLowerCase()}.`);
    } else if (outcome.kind === 'conflict') {
      toast('error', 'Someone changed this permit — reloaded. Check it and try again.');
      onConflict();
    } else {
      setRefusals({ version: permit.version, byEvent: { ...byEvent, [action.event]: outcome.reasons } });
      toast('error', `${action.label}: refused. The reasons are listed under the button.`);
    }
  };

  if (!permit.actions.length) return <p className="text-sm text-ink-soft">There is nothing for you to do on this permit now.</p>;

  return (
    <>
      <ul className="flex flex-col gap-3" aria-label="Actions">
        {permit.actions.map((a) => (
          <ActionItem key={a.event} action={a} refusal={byEvent[a.event]} onOpen={() => setOpen(a)} />
        ))}
      </ul>
      {open ? <TransitionDialog action={open} permit={permit} userName={userName} timeZone={timeZone} onClose={() => setOpen(null)} onOutcome={(o) => onOutcome(open, o)} /> : null}
    </>
  );
}
