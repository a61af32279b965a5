import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { stepKindLabels } from '@shared/schemas/isolation.schema';
import { timedCheckLabels } from '@shared/permit/due-times';
import { formatInZone } from '@shared/time/zone';
import type { MyWorkDue, MyWorkGasItem, MyWorkPermitItem, MyWorkPermitRef, MyWorkStepAction, MyWorkStepItem } from '@shared/types/my-work';
import { PermitStateBadge, formatSpan, useNow } from '@client/features/permits';
import { boardStepAddress } from '@client/lib/board-address';

/** A list of "My work": its heading with the count, and the rows or, when empty, what that means in words. */
export function WorkList({ id, title, count, empty, children }: { id: string; title: string; count: number; empty: string; children: ReactNode }) {
  return (
    <section aria-labelledby={`${id}-title`} data-testid={`my-work-${id}`} data-count={count} className="rounded-card border border-line bg-surface">
      <h3 id={`${id}-title`} className="flex items-center justify-between gap-3 border-b border-line px-4 py-3 text-lg font-semibold">
        <span>{title}</span>
        <span className={`inline-flex min-w-8 items-center justify-center rounded-full px-2 py-0.5 text-base font-bold ${count ? 'bg-brand text-white' : 'bg-line text-ink'}`}>
          <span className="sr-only">{count === 1 ? '1 item' : `${count} items`}</span>
          <span aria-hidden>{count}</span>
        </span>
      </h3>
      {count ? <ul className="divide-y divide-line">{children}</ul> : <p className="px-4 py-4 text-ink-soft">{empty}</p>}
    </section>
  );
}

/** One big row: the whole row is the link, at least 56 px tall for a gloved thumb. */
function Row({ to, children, testId }: { to: string; children: ReactNode; testId?: string }) {
  return (
    <li data-testid={testId ?? 'my-work-row'}>
      <Link to={to} className="flex min-h-14 flex-col justify-center gap-1 px-4 py-3 text-ink no-underline hover:bg-brand/5 focus-visible:bg-brand/5">
        {children}
      </Link>
    </li>
  );
}

function PermitLine({ permit, extra }: { permit: MyWorkPermitRef; extra?: ReactNode }) {
  return (
    <span className="flex flex-wrap items-center gap-2">
      <span className="font-bold text-brand-strong underline">{permit.number}</span>
      <PermitStateBadge state={permit.state} />
      {extra}
    </span>
  );
}

const taskAddress = (permitId: string, kind: MyWorkDue['kind']) =>
  kind === 'gas_test' ? `/permits/${permitId}/gas-test` : kind === 'validity_end' ? `/permits/${permitId}` : `/permits/${permitId}/check?kind=${kind}`;

const dueLabel = (kind: MyWorkDue['kind']) => (kind === 'validity_end' ? 'Permit ends' : timedCheckLabels[kind]);

/** A countdown in plain words: "in 12 min 5 s", "overdue by 3 min". */
export function countdown(now: Date, dueAt: string): { overdue: boolean; text: string } {
  const ms = new Date(dueAt).getTime() - now.getTime();
  const overdue = ms < 0;
  const abs = Math.abs(ms);
  const text = abs < 3_600_000 ? `${Math.floor(abs / 60_000)} min ${Math.floor((abs % 60_000) / 1000)} s` : formatSpan(abs);
  return { overdue, text: overdue ? `overdue by ${text}` : `in ${text}` };
}

/** A permit waiting: to accept, sent back, to approve, to re-validate, a return to service to acknowledge. */
export function PermitWorkRow({ item, doing }: { item: MyWorkPermitItem; doing: string }) {
  return (
    <Row to={`/permits/${item.permit.id}`}>
      <PermitLine permit={item.permit} />
      <span className="font-semibold">{item.permit.title}</span>
      <span className="text-sm text-ink-soft">
        {item.permit.pipelineName} · {doing}
      </span>
      {item.reason ? <span className="text-sm">“{item.reason}”</span> : null}
    </Row>
  );
}

/** The lead's live work: the permit, and what falls due next, each one tap from its task screen. */
export function LiveWorkRow({ item, timeZone, now }: { item: MyWorkPermitItem; timeZone: string; now: Date }) {
  const next = item.due.slice(0, 3);
  return (
    <li data-testid="my-work-row" className="flex flex-col gap-2 px-4 py-3">
      <Link to={`/permits/${item.permit.id}`} className="flex min-h-11 flex-col justify-center text-ink no-underline">
        <PermitLine permit={item.permit} />
        <span className="font-semibold">{item.permit.title}</span>
        {item.reason ? <span className="text-sm">Stopped: “{item.reason}”</span> : null}
      </Link>
      {next.length ? (
        <ul className="flex flex-col gap-2">
          {next.map((d) => {
            const left = countdown(now, d.dueAt);
            return (
              <li key={d.kind}>
                <Link
                  to={taskAddress(item.permit.id, d.kind)}
                  className={`flex min-h-11 flex-wrap items-center justify-between gap-2 rounded-md border px-3 py-2 no-underline ${d.overdue || left.overdue ? 'border-danger bg-danger-soft text-ink' : 'border-line text-ink'}`}
                >
                  <span className="font-semibold">{dueLabel(d.kind)}</span>
                  <span className="text-sm">
                    {formatInZone(d.dueAt, timeZone, 'dayTime')} · <span className={left.overdue ? 'font-bold text-danger' : ''}>{left.text}</span>
                  </span>
                </Link>
              </li>
            );
          })}
        </ul>
      ) : null}
    </li>
  );
}

const stepDoing: Record<MyWorkStepAction, string> = {
  apply: 'Apply',
  verify: 'Verify',
  remove: 'Remove',
  applied: 'Acknowledge applied',
  remote_inhibited: 'Acknowledge remote inhibition',
  removed: 'Acknowledge removed',
  plug_warnings: 'Acknowledge plug warnings',
};

/** Where a step's action is done: the technician's task screen, the board for the control room, the permit for the rest. */
const stepAddress = (item: MyWorkStepItem) => {
  switch (item.action) {
    case 'apply':
    case 'verify':
    case 'remove':
      return `/permits/${item.permit.id}/steps/${item.stepId}/${item.action}`;
    case 'applied':
    case 'remote_inhibited':
      return boardStepAddress(item.permit.pipelineId, item.stepId);
    default:
      return `/permits/${item.permit.id}`;
  }
};

export function StepWorkRow({ item }: { item: MyWorkStepItem }) {
  return (
    <Row to={stepAddress(item)}>
      <span className="flex flex-wrap items-center gap-2">
        <span className="text-lg font-bold text-brand-strong underline">
          {stepDoing[item.action]} {item.label}
        </span>
      </span>
      <span className="text-sm text-ink-soft">
        {stepKindLabels[item.kind]} · permit {item.permit.number} · {item.permit.pipelineName}
      </span>
    </Row>
  );
}

/** A repeat gas test: the due time in the site's zone with the zone, and a countdown that moves every second. */
export function GasWorkRow({ item, timeZone }: { item: MyWorkGasItem; timeZone: string }) {
  const now = useNow(1_000);
  const left = countdown(now, item.dueAt);
  const overdue = item.overdue || left.overdue;
  return (
    <li data-testid="my-work-gas" data-permit={item.permit.number} data-overdue={overdue ? 'true' : undefined}>
      <Link
        to={`/permits/${item.permit.id}/gas-test`}
        className={`flex min-h-14 flex-col justify-center gap-1 px-4 py-3 text-ink no-underline ${overdue ? 'border-l-8 border-l-danger bg-danger-soft' : 'hover:bg-brand/5'}`}
      >
        <PermitLine permit={item.permit} />
        <span className="font-semibold">{item.permit.title}</span>
        <span>
          Due {formatInZone(item.dueAt, timeZone, 'dayTime')} ·{' '}
          <span className={`font-bold ${overdue ? 'text-danger' : ''}`} data-testid="gas-countdown">
            {left.text}
          </span>
        </span>
      </Link>
    </li>
  );
}
