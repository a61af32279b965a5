import { useId, useState } from 'react';
import { Button } from '@client/components/ui/button';

/** Protective equipment most pipeline repair jobs call for; anything else is typed in. */
export const commonPpe = [
  'Hard hat',
  'Safety glasses',
  'Face shield',
  'Hearing protection',
  'Flame-resistant clothing',
  'Safety boots',
  'Cut-resistant gloves',
  'Welding helmet and gloves',
  'Personal gas monitor',
  'High-visibility vest',
] as const;

interface Props {
  value: string[];
  onChange: (next: string[]) => void;
  onBlur?: () => void;
  error?: string;
}

/** PPE as checkboxes of the common items plus free-text tags for the rest. */
export function PpeInput({ value, onChange, onBlur, error }: Props) {
  const [draft, setDraft] = useState('');
  const ids = { legend: useId(), extra: useId(), error: useId() };
  const others = value.filter((v) => !(commonPpe as readonly string[]).includes(v));
  const toggle = (item: string, on: boolean) => onChange(on ? [...value, item] : value.filter((v) => v !== item));
  const add = () => {
    const item = draft.trim().slice(0, 80);
    if (item && !value.some((v) => v.toLowerCase() === item.toLowerCase())) onChange([...value, item]);
    setDraft('');
  };

  return (
    <fieldset className="flex flex-col gap-2" aria-describedby={error ? ids.error : undefined}>
      <legend id={ids.legend} className="text-sm font-semibold">
        Personal protective equipment
      </legend>
      <div className="grid grid-cols-1 gap-x-4 sm:grid-cols-2">
        {commonPpe.map((item) => (
          <label key={item} className="flex min-h-11 items-center gap-2">
            <input type="checkbox" className="size-5" checked={value.includes(item)} onChange={(e) => toggle(item, e.target.checked)} onBlur={onBlur} />
            {item}
          </label>
        ))}
      </div>
      {others.length ? (
        <ul className="flex flex-wrap gap-2" aria-label="Other PPE">
          {others.map((item) => (
            <li key={item} className="inline-flex items-center gap-1 rounded-full border border-line bg-brand-soft pl-3 text-sm">
              <span className="break-all">{item}</span>
              <button type="button" className="min-h-11 min-w-11 rounded-full hover:bg-white" aria-label={`Remove ${item}`} onClick={() => onChange(value.filter((v) => v !== item))}>
                ×
              </button>
            </li>
          ))}
        </ul>
      ) : null}
      <div className="flex flex-wrap items-end gap-2">
        <div className="flex min-w-0 flex-1 flex-col gap-1">
          <label htmlFor={ids.extra} className="text-sm font-semibold">
            Other PPE
          </label>
          <input
            id={ids.extra}
            className="min-h-11 w-full rounded-md border border-line bg-surface px-3 text-base"
            value={draft}
            maxLength={80}
            onChange={(e) => setDraft(e.target.value)}
            onKeyDown={(e) => {
              if (e.key === 'Enter') {
                e.preventDefault();
                add();
              }
            }}
            onBlur={onBlur}
          />
        </div>
        <Button type="button" variant="secondary" onClick={add} disabled={!draft.trim()}>
          Add
        </Button>
      </div>
      {error ? (
        <p id={ids.error} role="alert" className="text-sm font-medium text-danger">
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}
