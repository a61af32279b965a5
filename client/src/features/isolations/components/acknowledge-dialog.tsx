import { useState } from 'react';
import type { AcknowledgeStepInput } from '@shared/schemas/isolation.schema';
import { conditionLabels, type StepCondition } from '@shared/schemas/isolation.schema';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import { useStepAction } from '../api/step-mutations';

export type AcknowledgeWhat = AcknowledgeStepInput['what'];

export const acknowledgeButtonLabels: Record<AcknowledgeWhat, string> = {
  remote_inhibited: 'Acknowledge remote inhibition',
  applied: 'Acknowledge applied',
  removed: 'Acknowledge removed',
  plug_warnings: 'Acknowledge plug warnings',
};

function wording(what: AcknowledgeWhat, label: string, condition: StepCondition) {
  switch (what) {
    case 'remote_inhibited':
      return `Remote operation of ${label} is inhibited from the control room, so it cannot be opened from here while it is locked on site.`;
    case 'applied':
      return `${label} is isolated on the line (${conditionLabels[condition].toLowerCase()}) and is shown as such in the control room.`;
    case 'removed':
      return `${label} has come off. The control room knows the point may be returned to normal operation.`;
    case 'plug_warnings':
      return `The plug at ${label} was built outside the rules shown. You accept it as built, and work may start once everything else is in place.`;
  }
}

interface Props {
  permitId: string;
  step: { id: string; label: string; condition: StepCondition };
  what: AcknowledgeWhat;
  onClose: () => void;
}

/** A confirmation before an acknowledgement goes on the record. */
export function AcknowledgeDialog({ permitId, step, what, onClose }: Props) {
  const ack = useStepAction('acknowledge');
  const toast = useToast();
  const [problem, setProblem] = useState<string | null>(null);
  const confirm = () =>
    ack.mutate(
      { permitId, stepId: step.id, body: { what } },
      {
        onSuccess: () => {
          toast('success', `${acknowledgeButtonLabels[what].replace('Acknowledge', 'Acknowledged')}: ${step.label}.`);
          onClose();
        },
        onError: (err) => setProblem(err.message),
      },
    );
  return (
    <ModalDialog title={`${acknowledgeButtonLabels[what]}: ${step.label}`} onClose={onClose} description={<p>{wording(what, step.label, step.condition)}</p>}>
      {problem ? (
        <Notice tone="danger" role="alert" title="Not acknowledged">
          {problem}
        </Notice>
      ) : null}
      <p className="text-sm text-ink-soft">Your name and the time go on the permit&apos;s record.</p>
      <div className="flex flex-wrap justify-end gap-2">
        <Button type="button" variant="secondary" onClick={onClose}>
          Cancel
        </Button>
        <Button type="button" busy={ack.isPending} onClick={confirm} data-autofocus>
          Acknowledge
        </Button>
      </div>
    </ModalDialog>
  );
}
