import { describe, expect, it } from 'vitest';
import { inventoryChangeRefusal } from '@shared/assets/inventory-state';

const inStore = { state: 'in_store' as const, holderUserId: null };

describe('inventoryChangeRefusal', () => {
  it('when a lock in store is issued, lost or retired, then the register may do it', () => {
    expect(inventoryChangeRefusal('lock', inStore, { holderUserId: 'u1' })).toBeNull();
    expect(inventoryChangeRefusal('lock', inStore, { state: 'lost' })).toBeNull();
    expect(inventoryChangeRefusal('lock', { state: 'lost', holderUserId: null }, { state: 'in_store' })).toBeNull();
    expect(inventoryChangeRefusal('lock', inStore, { state: 'retired' })).toBeNull();
  });

  it('when anyone tries to mark a lock as on an isolation by hand, then it is refused', () => {
    expect(inventoryChangeRefusal('lock', inStore, { state: 'applied' })).toMatch(/Only the isolation work/);
  });

  it('when a tag is on an isolation, then neither its state nor its holder changes here; its notes may', () => {
    const applied = { state: 'applied' as const, holderUserId: 'u1' };
    expect(inventoryChangeRefusal('tag', applied, { state: 'in_store' })).toMatch(/tag is on an isolation/);
    expect(inventoryChangeRefusal('tag', applied, { holderUserId: 'u2' })).toMatch(/on an isolation/);
    expect(inventoryChangeRefusal('tag', applied, { state: 'applied', holderUserId: 'u1' })).toBeNull();
    expect(inventoryChangeRefusal('tag', applied, {})).toBeNull();
  });

  it('when a retired lock is brought back or given a holder, then it is refused', () => {
    const retired = { state: 'retired' as const, holderUserId: null };
    expect(inventoryChangeRefusal('lock', retired, { state: 'in_store' })).toMatch(/stays retired/);
    expect(inventoryChangeRefusal('lock', retired, { holderUserId: 'u1' })).toMatch(/no holder/);
  });
});
