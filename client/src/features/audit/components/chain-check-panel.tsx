import { formatInZone } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { useChainCheck, useStartChainCheck } from '../api/get-audit-log';

const n = (v: number) => v.toLocaleString('en-US');

/** The chain check: its result in words, the events found broken, progress while it runs, and a button to run it again. */
export function ChainCheckPanel({ timeZone }: { timeZone: string }) {
  const check = useChainCheck();
  const start = useStartChainCheck();
  const c = check.data;
  const running = c?.status === 'running';
  return (
    <section aria-labelledby="chain-check-heading" className="flex flex-col gap-3 rounded-card border border-line bg-surface p-3">
      <h2 id="chain-check-heading" className="text-lg font-semibold">
        Tamper check
      </h2>
      <div aria-live="polite" data-testid="chain-check">
        {!c ? (
          <p>The chain of audit entries has not been checked yet.</p>
        ) : running ? (
          <div className="flex flex-col gap-1">
            <p>
              Checking… {n(c.checked)} of {c.total ? n(c.total) : 'all'} entries
            </p>
            <progress className="h-3 w-full" value={c.checked} max={Math.max(c.total, 1)} aria-label="Entries checked" />
          </div>
        ) : c.status === 'failed' ? (
          <Notice tone="danger" role="alert">
            The check could not finish. Try again.
          </Notice>
        ) : c.ok ? (
          <Notice tone="safe">
            Chain verified to entry {n(c.lastSeq ?? 0)} at {formatInZone(c.finishedAt, timeZone, 'dayTime')}.
          </Notice>
        ) : (
          <Notice tone="danger" role="alert" title={`The chain is broken in ${c.breaks.length} place(s). Checked at ${formatInZone(c.finishedAt, timeZone, 'dayTime')}.`}>
            <ul className="list-disc pl-5" data-testid="chain-breaks">
              {c.breaks.map((b, i) => (
                <li key={i}>
                  Entry {n(b.seq)}
                  {b.lastSeq ? ` to ${n(b.lastSeq)}` : ''}: {b.problem}
                </li>
              ))}
            </ul>
          </Notice>
        )}
      </div>
      {start.isError ? (
        <Notice tone="danger" role="alert">
          {start.error.message}
        </Notice>
      ) : null}
      <div>
        <Button type="button" onClick={() => start.mutate()} busy={start.isPending} disabled={running}>
          {c ? 'Verify the chain again' : 'Verify the chain'}
        </Button>
      </div>
    </section>
  );
}
