import { useState } from 'react';
import type { AtmosphereLimits } from '@shared/calc';
import type { PermitGasLimitsInput } from '@shared/schemas/gas-tests.schema';
import type { PermitLimitsView } from '@shared/types/gas-tests';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useSetGasLimits } from '../api/set-gas-limits';

const rows = (l: AtmosphereLimits, hotWork: boolean) => [
  { gas: 'Oxygen', limit: `${l.o2.min}–${l.o2.max} % vol`, source: l.o2.source },
  hotWork ? { gas: 'Flammable gas (hot work)', limit: `at most ${l.hotWorkLel.max} % LEL`, source: l.hotWorkLel.source } : { gas: 'Flammable gas', limit: `at most ${l.lel.max} % LEL`, source: l.lel.source },
  { gas: 'H₂S', limit: `at most ${l.h2s.max} ppm`, source: l.h2s.source },
  { gas: 'CO', limit: `at most ${l.co.max} ppm`, source: l.co.source },
];

/** The limits this permit's tests are judged against, each with where it comes from. */
export function LimitsTable({ view }: { view: PermitLimitsView }) {
  return (
    <div className="overflow-x-auto rounded-card border border-line">
      <table className="w-full text-left text-sm" data-testid="permit-limits">
        <caption className="sr-only">Atmosphere limits of this permit</caption>
        <thead className="bg-brand-soft">
          <tr>
            <th scope="col" className="px-2 py-1">Gas</th>
            <th scope="col" className="px-2 py-1">Limit</th>
            <th scope="col" className="px-2 py-1">Source</th>
          </tr>
        </thead>
        <tbody>
          {rows(view.limits, view.hotWork).map((r) => (
            <tr key={r.gas} className="border-t border-line align-top">
              <td className="px-2 py-1 font-medium">{r.gas}</td>
              <td className="px-2 py-1 whitespace-nowrap">{r.limit}</td>
              <td className="px-2 py-1 text-xs break-words text-ink-soft">{r.source}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

const fields = [
  { key: 'o2.min', label: 'Oxygen minimum (% vol)' },
  { key: 'o2.max', label: 'Oxygen maximum (% vol)' },
  { key: 'lel.max', label: 'Flammable gas maximum (% LEL)' },
  { key: 'hotWorkLel.max', label: 'Flammable gas for hot work, maximum (% LEL)' },
  { key: 'h2s.max', label: 'H₂S maximum (ppm)' },
  { key: 'co.max', label: 'CO maximum (ppm)' },
] as const;

/** Tighten the permit's limits (never loosen): the server refuses anything looser, naming the rule. */
export function TightenLimitsForm({ permitId, view, draft }: { permitId: string; view: PermitLimitsView; draft: boolean }) {
  const set = useSetGasLimits(permitId);
  const toast = useToast();
  const initial = Object.fromEntries(fields.map((f) => {
    const [gas, side] = f.key.split('.') as [keyof PermitGasLimitsInput, 'min' | 'max'];
    const v = (view.permitRequest?.[gas] as { min?: number; max?: number } | undefined)?.[side];
    return [f.key, v === undefined ? '' : String(v)];
  })) as Record<string, string>;
  const [values, setValues] = useState(initial);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const submit = (e: React.FormEvent) => {
    e.preventDefault();
    const input: Record<string, Record<string, number>> = {};
    const bad: Record<string, string> = {};
    for (const f of fields) {
      const text = values[f.key].trim();
      if (!text) continue;
      const n = Number(text);
      if (!/^\d+(\.\d+)?$/.test(text) || !Number.isFinite(n)) bad[f.key] = 'Enter a number.';
      const [gas, side] = f.key.split('.');
      (input[gas] ??= {})[side] = n;
    }
    setErrors(bad);
    if (Object.keys(bad).length) return;
    set.mutate(input as PermitGasLimitsInput, {
      onSuccess: () => toast('success', 'The permit’s limits are set.'),
      onError: (err) => (err instanceof ApiError && err.details.length ? setErrors(Object.fromEntries(err.details.map((d) => [d.path, d.message]))) : toast('error', err.message)),
    });
  };
  return (
    <details className="rounded-card border border-line p-3">
      <summary className="min-h-11 cursor-pointer content-center font-semibold">Tighten this permit&apos;s limits</summary>
      <form noValidate onSubmit={submit} className="mt-2 flex flex-col gap-3">
        <Notice tone="info">
          {draft ? 'Leave a field empty to keep the tenant’s limit. ' : 'The permit is issued: its limits may only be made stricter. '}
          Nothing may be looser than the tenant&apos;s limits or the published ones.
        </Notice>
        <div className="grid gap-3 sm:grid-cols-2">
          {fields
            .filter((f) => (view.hotWork ? f.key !== 'lel.max' : f.key !== 'hotWorkLel.max'))
            .map((f) => (
              <TextField key={f.key} label={f.label} inputMode="decimal" value={values[f.key]} onChange={(e) => setValues({ ...values, [f.key]: e.target.value })} error={errors[f.key]} />
            ))}
        </div>
        <div>
          <Button type="submit" variant="secondary" busy={set.isPending}>
            Save the permit&apos;s limits
          </Button>
        </div>
      </form>
    </details>
  );
}
