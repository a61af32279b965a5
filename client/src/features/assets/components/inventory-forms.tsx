import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { inventoryInputSchema, inventoryStateLabels, manualInventoryStates, type InventoryInput } from '@shared/schemas/assets.schema';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { InventoryItem } from '@shared/assets/types';
import type { PersonOption } from '@shared/types/admin';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { Loading } from '@client/components/ui/page';
import { useCreateInventory, useHolders, useUpdateInventory } from '../api/inventory';
import { applyServerErrors, textOrNull } from './form-helpers';

type FormInput = z.input<typeof inventoryInputSchema>;
const FIELDS = ['number', 'state', 'holderUserId', 'notes'] as const;
export const kindLabel: Record<InventoryKind, string> = { lock: 'Lock', tag: 'Tag' };

function HolderSelect({ people, ...props }: { people: PersonOption[] | undefined } & React.ComponentProps<typeof SelectField>) {
  return (
    <SelectField {...props}>
      <option value="">Nobody (in the store)</option>
      {people?.map((p) => (
        <option key={p.userId} value={p.userId}>
          {p.name}
        </option>
      ))}
    </SelectField>
  );
}

/** Adds or changes one lock or tag. A lock on an isolation keeps its state and holder: only notes change here. */
export function InventoryForm({ kind, item, onDone, onCancel }: { kind: InventoryKind; item?: InventoryItem; onDone: (i: InventoryItem) => void; onCancel?: () => void }) {
  const create = useCreateInventory(kind);
  const update = useUpdateInventory(kind);
  const holders = useHolders(true);
  const [problem, setProblem] = useState<string | null>(null);
  const onIsolation = item?.state === 'applied';
  const form = useForm<FormInput, unknown, InventoryInput>({
    resolver: zodResolver(inventoryInputSchema),
    defaultValues: item ? { number: item.number, state: onIsolation ? undefined : item.state, holderUserId: item.holderUserId, notes: item.notes } : { number: '', state: 'in_store', holderUserId: null, notes: null },
  });
  const errors = form.formState.errors;
  const label = kindLabel[kind];
  // The holder list must be there before the select shows the current holder.
  if (holders.isPending) return <Loading label="Loading people…" />;

  const submit = form.handleSubmit((values) => {
    setProblem(null);
    const onError = (e: Error) => setProblem(applyServerErrors(e, form.setError, FIELDS));
    const onSuccess = (saved: InventoryItem) => {
      if (!item) form.reset({ number: '', state: 'in_store', holderUserId: null, notes: null });
      onDone(saved);
    };
    if (!item) return create.mutate(values, { onSuccess, onError });
    const patch = onIsolation ? { notes: values.notes ?? null } : { ...values, holderUserId: values.holderUserId ?? null, notes: values.notes ?? null };
    update.mutate({ id: item.id, patch }, { onSuccess, onError });
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" aria-label={item ? `Change ${label.toLowerCase()} ${item.number}` : `Add a ${label.toLowerCase()}`}>
      {problem ? (
        <Notice tone="danger" role="alert">
          {problem}
        </Notice>
      ) : null}
      {onIsolation ? (
        <Notice tone="info">
          This {label.toLowerCase()} is on an isolation. It comes back to the store when the isolation step that holds it is removed; only its notes can change here.
        </Notice>
      ) : null}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
        <TextField label={`${label} number`} hint="Stamped on it, e.g. L-041" disabled={onIsolation} {...form.register('number')} error={errors.number?.message} />
        <SelectField label="State" disabled={onIsolation} {...form.register('state')} error={errors.state?.message}>
          {(onIsolation ? (['applied'] as const) : manualInventoryStates).map((s) => (
            <option key={s} value={s}>
              {inventoryStateLabels[s]}
            </option>
          ))}
        </SelectField>
        <HolderSelect
          label="Held by"
          people={holders.data}
          disabled={onIsolation}
          {...form.register('holderUserId', { setValueAs: (v) => v || null })}
          error={errors.holderUserId?.message}
        />
        <TextField label="Notes" {...form.register('notes', { setValueAs: textOrNull })} error={errors.notes?.message} />
      </div>
      <div className="flex flex-wrap gap-2">
        <Button type="submit" busy={create.isPending || update.isPending}>
          {item ? 'Save' : `Add ${label.toLowerCase()}`}
        </Button>
        {onCancel ? (
          <Button type="button" variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
        ) : null}
      </div>
    </form>
  );
}
