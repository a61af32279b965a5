import { useMemo, useState } from 'react';
import { z } from 'zod';
import type { ColumnDef } from '@tanstack/react-table';
import { inventoryQuerySchema, inventoryStateLabels, inventoryStates, type InventoryState } from '@shared/schemas/assets.schema';
import type { InventoryItem } from '@shared/assets/types';
import { formatInZone } from '@shared/time/zone';
import { Can, useAbility } from '@client/lib/ability';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { DataTable } from '@client/components/ui/data-table';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Card, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useInventory } from '../api/inventory';
import { InventoryForm, kindLabel } from '../components/inventory-forms';

// Colour carries the ISO 3864 meaning: on an isolation = danger (red), lost = caution (yellow).
const stateTone: Record<InventoryState, string> = {
  in_store: 'bg-brand-soft text-ink',
  applied: 'bg-danger-soft text-danger',
  lost: 'bg-caution-soft text-ink',
  retired: 'bg-paper text-ink-soft',
};

// The server's list query, plus which of the two registers this page shows (a path there, a parameter here).
const locksPageQuerySchema = inventoryQuerySchema.extend({ kind: z.enum(['lock', 'tag']).default('lock') });

const printLinkClass = 'inline-flex min-h-11 items-center justify-center gap-2 rounded-md border border-line bg-surface px-4 font-semibold text-ink no-underline hover:bg-brand-soft';

/** The A4 sheet of QR labels for the locks or tags the list shows now (its filters, every page). */
const labelSheetHref = (kind: 'lock' | 'tag', state?: string, q?: string) => `/api/labels?${new URLSearchParams({ kind, ...(state ? { state } : {}), ...(q ? { q } : {}) })}`;

export default function LocksPage() {
  const { query, set } = useListQuery(locksPageQuerySchema);
  const { kind, ...listQuery } = query;
  const { state, q, page } = listQuery;
  const list = useInventory(kind, listQuery);
  const [editing, setEditing] = useState<InventoryItem | 'new' | null>(null);
  const toast = useToast();
  const ability = useAbility();
  const subject = kind === 'lock' ? 'Lock' : 'Tag';
  const canEdit = ability.can('update', subject);
  const { data: me } = useMe();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const edit = (next: InventoryItem | 'new') => {
    setEditing(next);
    requestAnimationFrame(() => document.getElementById('inventory-panel')?.scrollIntoView({ behavior: 'smooth', block: 'start' }));
  };

  const columns = useMemo<ColumnDef<InventoryItem, unknown>[]>(
    () => [
      { id: 'number', header: 'Number', cell: ({ row }) => <span className="font-semibold">{row.original.number}</span> },
      {
        id: 'state',
        header: 'State',
        cell: ({ row }) => <span className={`inline-block rounded px-2 py-0.5 text-xs font-semibold ${stateTone[row.original.state]}`}>{inventoryStateLabels[row.original.state]}</span>,
      },
      { id: 'holder', header: 'Held by', cell: ({ row }) => row.original.holderName ?? '—' },
      { id: 'notes', header: 'Notes', cell: ({ row }) => row.original.notes ?? '' },
      { id: 'updated', header: 'Last change', cell: ({ row }) => formatInZone(row.original.updatedAt, timeZone) },
      {
        id: 'actions',
        header: 'Action',
        cell: ({ row }) =>
          canEdit ? (
            <Button variant="ghost" onClick={() => edit(row.original)} aria-label={`Change ${row.original.number}`}>
              Change
            </Button>
          ) : null,
      },
    ],
    [canEdit, timeZone],
  );

  return (
    <>
      <PageHeader
        title="Locks and tags"
        subtitle="The numbered padlocks and danger tags of this tenant: where each one is and who holds it. The isolation work puts them on and takes them off."
        actions={
          <div className="flex flex-wrap gap-2">
            <a href={labelSheetHref(kind, state, q)} download className={printLinkClass}>
              Print labels for these {kind}s
            </a>
            <Can I="create" a={subject}>
              <Button onClick={() => edit('new')}>Add a {kind}</Button>
            </Can>
          </div>
        }
      />
      <div className="flex flex-col gap-4">
        <div className="flex flex-wrap gap-2" role="group" aria-label="Show locks or tags">
          {(['lock', 'tag'] as const).map((k) => (
            <Button key={k} variant={k === kind ? 'primary' : 'secondary'} aria-pressed={k === kind} onClick={() => { setEditing(null); set({ kind: k === 'lock' ? undefined : k, page: undefined }); }}>
              {kindLabel[k]}s
            </Button>
          ))}
        </div>
        <div id="inventory-panel" className="scroll-mt-4" />
        {editing ? (
          <Card>
            <h2 className="mb-3 text-lg font-semibold">{editing === 'new' ? `Add a ${kind}` : `${kindLabel[kind]} ${editing.number}`}</h2>
            <InventoryForm
              key={editing === 'new' ? `new-${kind}` : editing.id}
              kind={kind}
              item={editing === 'new' ? undefined : editing}
              onCancel={() => setEditing(null)}
              onDone={(saved) => {
                toast('success', `${kindLabel[kind]} ${saved.number} saved.`);
                if (editing !== 'new') setEditing(null);
              }}
            />
          </Card>
        ) : null}
        <div className="grid gap-3 sm:grid-cols-2">
          <TextField label="Search number" type="search" defaultValue={q} key={`q-${kind}`} onChange={(e) => set({ q: e.target.value || undefined, page: undefined })} />
          <SelectField label="State" value={state ?? ''} onChange={(e) => set({ state: e.target.value || undefined, page: undefined })}>
            <option value="">Every state</option>
            {inventoryStates.map((s) => (
              <option key={s} value={s}>
                {inventoryStateLabels[s]}
              </option>
            ))}
          </SelectField>
        </div>
        <DataTable
          caption={kind === 'lock' ? 'Locks' : 'Tags'}
          columns={columns}
          data={list.data}
          isLoading={list.isPending}
          page={page}
          onPage={(p) => set({ page: String(p) })}
          empty={{ title: `No ${kind}s match.`, hint: 'Clear the filters to see them all.' }}
          rowTestId="inventory-row"
        />
      </div>
    </>
  );
}
