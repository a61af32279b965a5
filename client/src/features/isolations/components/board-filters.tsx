import { boardPermitStates, permitStateLabels } from '@shared/permit/states';
import type { BoardQuery as Filters } from '@shared/schemas/isolation.schema';
import { SelectField } from '@client/components/ui/field';
import { usePermitPipelines } from '@client/features/permits';

/** "Not acknowledged only", pipeline and permit-state filters; the values live in the URL so a board view can be shared or reloaded. */
export function BoardFilters({ value, onChange }: { value: Filters; onChange: (next: Filters) => void }) {
  const pipelines = usePermitPipelines();
  return (
    <form className="grid gap-3 sm:grid-cols-2 lg:max-w-2xl" aria-label="Filter the board" onSubmit={(e) => e.preventDefault()}>
      <label className="flex min-h-11 cursor-pointer items-center gap-3 rounded-md border border-line bg-surface px-3 py-2 font-semibold sm:col-span-2">
        <input
          type="checkbox"
          className="size-6 shrink-0"
          checked={value.unacknowledged === 'true'}
          onChange={(e) => onChange({ ...value, unacknowledged: e.target.checked ? 'true' : undefined })}
        />
        Not acknowledged only
      </label>
      <SelectField label="Pipeline" value={value.pipelineId ?? ''} onChange={(e) => onChange({ ...value, pipelineId: e.target.value || undefined })}>
        <option value="">All pipelines</option>
        {pipelines.data?.items.map((p) => (
          <option key={p.id} value={p.id}>
            {p.name}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Permit state"
        value={value.permitState ?? ''}
        onChange={(e) => onChange({ ...value, permitState: (e.target.value || undefined) as Filters['permitState'] })}
      >
        <option value="">Any state</option>
        {boardPermitStates.map((s) => (
          <option key={s} value={s}>
            {permitStateLabels[s]}
          </option>
        ))}
      </SelectField>
    </form>
  );
}
