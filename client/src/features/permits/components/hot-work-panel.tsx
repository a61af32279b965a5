import { useState } from 'react';
import { subject } from '@casl/ability';
import { fireWatchEnd } from '@shared/calc';
import { formatInZone } from '@shared/time/zone';
import { workUnderWayStates } from '@shared/permit/states';
import { useAbility } from '@client/lib/ability';
import { useConnection } from '@client/lib/connection';
import { Button } from '@client/components/ui/button';
import { ModalDialog } from '@client/components/ui/dialog';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import type { PermitDetail } from '@shared/types/permits';
import { useRecordHotWorkStopped } from '../api/record-hot-work-stopped';
import { formatSpan } from '../lib/time-left';
import { useNow } from '../hooks/use-now';

/** Hot work: the contractor lead records when it stopped, and the fire watch runs from then. */
export function HotWorkPanel({ permit, timeZone }: { permit: PermitDetail; timeZone: string }) {
  const ability = useAbility();
  const stop = useRecordHotWorkStopped(permit.id);
  const toast = useToast();
  const now = useNow();
  const [confirming, setConfirming] = useState(false);
  const { online } = useConnection();
  if (!permit.kinds.includes('hot_work')) return null;

  if (permit.hotWorkEndedAt) {
    const end = fireWatchEnd(new Date(permit.hotWorkEndedAt), permit.fireWatchMinutes);
    const left = end.getTime() - now.getTime();
    return (
      <Notice tone={left > 0 ? 'caution' : 'safe'} title="Fire watch" role="status">
        <p>Hot work stopped {formatInZone(permit.hotWorkEndedAt, timeZone)}.</p>
        <p data-testid="fire-watch-end">
          The fire watch runs until <strong>{formatInZone(end, timeZone)}</strong>
          {left > 0 ? ` (${formatSpan(left)} more).` : ' — its time is over.'}
        </p>
        <p className="text-xs">{permit.fireWatchMinutes} minutes after hot work stops (NFPA 51B, 2019 edition, requires at least 60; the fire watcher ends it with a closing check: area clear, nothing smouldering).</p>
      </Notice>
    );
  }

  const may = workUnderWayStates.includes(permit.state) && ability.can('hand_back', subject('Permit', { ...permit }));
  if (!may) {
    return <p className="text-sm text-ink-soft">Fire watch: {permit.fireWatchMinutes} minutes from when the contractor lead records that hot work has stopped.</p>;
  }
  return (
    <>
      <Button type="button" variant="secondary" className="w-full" disabled={!online} aria-describedby={online ? undefined : 'hot-work-offline'} onClick={() => setConfirming(true)}>
        Hot work stopped
      </Button>
      {online ? null : (
        <p id="hot-work-offline" className="text-sm font-medium">
          Needs a connection: the fire watch runs from the time Holdpoint records.
        </p>
      )}
      {confirming ? (
        <ModalDialog
          title={`Hot work stopped — ${permit.number}`}
          onClose={() => setConfirming(false)}
          description={<p>Record that all hot work has stopped now. The fire watch of {permit.fireWatchMinutes} minutes starts from this moment and must run before the permit is handed back.</p>}
        >
          <div className="flex flex-wrap justify-end gap-2">
            <Button type="button" variant="secondary" data-autofocus onClick={() => setConfirming(false)}>
              Go back
            </Button>
            <Button
              type="button"
              busy={stop.isPending}
              onClick={() =>
                stop.mutate(undefined, {
                  onSuccess: () => {
                    setConfirming(false);
                    toast('success', 'Hot work stopped: the fire watch has started.');
                  },
                  onError: (err) => {
                    setConfirming(false);
                    toast('error', err.message);
                  },
                })
              }
            >
              Record hot work stopped
            </Button>
          </div>
        </ModalDialog>
      ) : null}
    </>
  );
}
