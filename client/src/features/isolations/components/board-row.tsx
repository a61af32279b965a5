import { memo, type ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { subject } from '@casl/ability';
import { conditionLabels, stepKindLabels } from '@shared/schemas/isolation.schema';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import { formatInZone } from '@shared/time/zone';
import { Can } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { describeGasDue, formatSpan, PermitStateBadge } from '@client/features/permits';
import type { BoardItem } from '@shared/types/board';
import { slotClass, slotProps, type VirtualSlot } from './virtual-slot';

interface Props extends VirtualSlot {
  item: BoardItem;
  /** The last row of its pipeline closes the pipeline's box. */
  last: boolean;
  tenantId: string;
  unit: LocationUnit;
  timeZone: string;
  now: Date;
  onAcknowledge: (item: BoardItem, what: BoardAcknowledgement) => void;
}

/** What the control room acknowledges from the board: an isolation as applied, a remote valve's remote operation as inhibited. */
export type BoardAcknowledgement = 'applied' | 'remote_inhibited';

/** Not yet acknowledged in one way or the other: what "Not acknowledged only" keeps. */
export const awaitsAcknowledgement = (item: BoardItem) => !item.controlRoomAckAppliedAt || (item.remotelyOperable && !item.remoteAckAt);

/** The board's columns, shown as a header on wide screens; each cell also carries its own label for narrow ones. */
export const boardColumns = ['Point', 'Condition', 'Lock / tag', 'Permits holding it', 'Applied', 'Gas test', 'Control room'] as const;
export const boardGrid = 'xl:grid-cols-[minmax(9rem,1.2fr)_minmax(8rem,1fr)_minmax(6rem,0.7fr)_minmax(9rem,1.2fr)_minmax(9rem,1.1fr)_minmax(8rem,1fr)_minmax(9rem,1fr)]';

function Cell({ label, children, testId }: { label: string; children: ReactNode; testId?: string }) {
  return (
    <div className="min-w-0 text-sm break-words" data-testid={testId}>
      <span className="block text-xs font-semibold text-ink-soft xl:sr-only">{label}</span>
      {children}
    </div>
  );
}

const ago = (now: Date, iso: string) => formatSpan(now.getTime() - new Date(iso).getTime());

/** One isolation in place: the point, its lock, the permits relying on it, how long it has been on, what is due. */
export const BoardRow = memo(function BoardRow({ item, last, tenantId, unit, timeZone, now, onAcknowledge, ...slot }: Props) {
  const unacknowledged = awaitsAcknowledgement(item);
  const appliedUnacknowledged = !item.controlRoomAckAppliedAt;
  const gas = item.nextGasTestDue ? describeGasDue(now, item.nextGasTestDue) : null;
  return (
    <li
      {...slotProps(slot)}
      data-testid="board-row"
      data-label={item.label}
      data-permit={item.permit.number}
      data-unacknowledged={appliedUnacknowledged ? 'true' : undefined}
      data-awaits-control-room={unacknowledged ? 'true' : undefined}
      className={`${slotClass} grid grid-cols-1 gap-x-4 gap-y-2 border-x border-t border-line px-3 py-3 sm:grid-cols-2 ${boardGrid} ${last ? 'rounded-b-card border-b' : ''} ${
        unacknowledged ? 'border-l-8 border-l-caution bg-caution-soft' : 'bg-surface'
      }`}
    >
      <Cell label="Point">
        <span className="block font-bold break-all text-brand-strong">{item.label}</span>
        <span className="block">
          {stepKindLabels[item.kind]} · {formatPosition(item.position, unit)}
        </span>
        {item.remotelyOperable ? (
          item.remoteAckAt ? (
            <span className="block text-ink-soft">Remote operation inhibited</span>
          ) : (
            <span className="flex flex-col items-start gap-1">
              <span className="block font-semibold text-danger">Remote operation not yet inhibited</span>
              <Can I="acknowledge" this={subject('IsolationStep', { tenantId })}>
                <Button variant="secondary" aria-label={`Acknowledge remote inhibition of ${item.label} on ${item.permit.number}`} onClick={() => onAcknowledge(item, 'remote_inhibited')}>
                  Acknowledge remote inhibition
                </Button>
              </Can>
            </span>
          )
        ) : null}
      </Cell>
      <Cell label="Condition">
        <span className="block">{conditionLabels[item.condition]}</span>
        {item.verifiedAt ? (
          <span className="block text-ink-soft" title={formatInZone(item.verifiedAt, timeZone)}>
            Verified by {item.verifiedByName}
          </span>
        ) : (
          <span className="block font-semibold">Not verified yet</span>
        )}
      </Cell>
      <Cell label="Lock / tag" testId="board-lock">
        {item.lockNumber || item.tagNumber ? `${item.lockNumber ?? '—'} / ${item.tagNumber ?? '—'}` : <span className="text-ink-soft">None</span>}
      </Cell>
      <Cell label="Permits holding it">
        <ul className="flex flex-col gap-1">
          {item.permits.map((p) => (
            <li key={p.id} className="flex flex-wrap items-center gap-2">
              <Link to={`/permits/${p.id}`} className="inline-flex min-h-11 items-center font-semibold whitespace-nowrap">
                {p.number}
              </Link>
              <PermitStateBadge state={p.state} />
            </li>
          ))}
        </ul>
      </Cell>
      <Cell label="Applied">
        <span className="block" title={formatInZone(item.appliedAt, timeZone)}>
          {ago(now, item.appliedAt)} ago
        </span>
        <span className="block text-ink-soft">by {item.appliedByName}</span>
        {item.plugBuiltAt ? <span className="block">Plug built {ago(now, item.plugBuiltAt)} ago</span> : null}
      </Cell>
      <Cell label="Gas test" testId="board-gas">
        {gas ? (
          <span className={gas.overdue ? 'font-bold text-danger' : ''} title={formatInZone(item.nextGasTestDue, timeZone)} data-overdue={gas.overdue ? 'true' : undefined}>
            {gas.overdue ? 'Gas test overdue' : 'Next gas test'} {gas.text.replace(/^overdue /, '')}
          </span>
        ) : (
          <span className="text-ink-soft">No work under way</span>
        )}
      </Cell>
      <Cell label="Control room">
        {appliedUnacknowledged ? (
          <div className="flex flex-col items-start gap-1">
            <span className="font-semibold">Newly applied, not acknowledged</span>
            <Can I="acknowledge" this={subject('IsolationStep', { tenantId })}>
              <Button variant="secondary" aria-label={`Acknowledge ${item.label} on ${item.permit.number}`} onClick={() => onAcknowledge(item, 'applied')}>
                Acknowledge
              </Button>
            </Can>
          </div>
        ) : (
          <span className="text-ink-soft" title={formatInZone(item.controlRoomAckAppliedAt, timeZone)}>
            Acknowledged
          </span>
        )}
      </Cell>
    </li>
  );
});
