/**
 * Which changes the lock and tag register may make by hand. 'applied' belongs to the isolation
 * work: it is set when a step puts the lock on and cleared when the step takes it off, so the
 * register neither sets it nor touches a lock that is on an isolation.
 */
import type { InventoryState } from '../schemas/assets.schema';

export type InventoryKind = 'lock' | 'tag';

export interface InventoryChange {
  state?: InventoryState;
  holderUserId?: string | null;
}

/** The reason a change is refused, written for the person at the register, or null when it is allowed. */
export function inventoryChangeRefusal(kind: InventoryKind, current: { state: InventoryState; holderUserId: string | null }, change: InventoryChange): string | null {
  const stateChanges = change.state !== undefined && change.state !== current.state;
  const holderChanges = change.holderUserId !== undefined && change.holderUserId !== current.holderUserId;
  if (current.state === 'applied' && (stateChanges || holderChanges)) {
    return `This ${kind} is on an isolation. It comes back to the store when the isolation step that holds it is removed.`;
  }
  if (stateChanges && change.state === 'applied') return `Only the isolation work puts a ${kind} on an isolation.`;
  if (current.state === 'retired' && stateChanges) return `A retired ${kind} stays retired; add a new one to the register instead.`;
  if (holderChanges && change.holderUserId && (change.state ?? current.state) === 'retired') return `A retired ${kind} has no holder.`;
  return null;
}
