import { useMemo } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { inToMm, mToFt, mmToIn, round } from '@shared/calc';
import { lineFillFormSchema, type LineFillForm } from '@shared/schemas/calc.schema';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { Card, Loading } from '@client/components/ui/page';
import { useLineFill } from '../api/get-line-fill';
import { useDebouncedValue } from '../hooks/use-debounced-value';
import type { DiameterBasis } from '../hooks/use-plug-figures';
import { fixed, upTo } from '../lib/format';

interface Props {
  metric: boolean;
  /** The bore from the mud plug inputs, offered as the line's inside diameter when it is one. */
  basis: DiameterBasis | null;
}

export function LineFillSection({ metric, basis }: Props) {
  const form = useForm<LineFillForm>({
    resolver: zodResolver(lineFillFormSchema),
    mode: 'onChange',
    defaultValues: { idValue: '', idUnit: metric ? 'mm' : 'in', length: '', lengthUnit: metric ? 'm' : 'ft' },
  });
  const { register, formState } = form;
  const values = useWatch({ control: form.control });
  const key = JSON.stringify(values);
  const settledKey = useDebouncedValue(key, 300);
  const query = useMemo(() => {
    const parsed = lineFillFormSchema.safeParse(JSON.parse(settledKey));
    if (!parsed.success) return null;
    const v = parsed.data;
    const id = Number(v.idValue);
    const length = Number(v.length);
    return { idIn: v.idUnit === 'mm' ? mmToIn(id) : id, lengthFt: v.lengthUnit === 'm' ? mToFt(length) : length };
  }, [settledKey]);
  const fill = useLineFill(query);
  const settling = key !== settledKey || fill.isFetching;

  const serverError = (path: 'idIn' | 'lengthFt') => (fill.error instanceof ApiError ? fill.error.fieldMessage(path) : undefined);
  const fillFromPlug = () => {
    if (!basis?.inside) return;
    const typed = values.idUnit === 'mm' ? round(inToMm(basis.diameterIn), 1) : round(basis.diameterIn, 3);
    form.setValue('idValue', String(typed), { shouldValidate: true, shouldDirty: true });
  };

  return (
    <Card className="flex flex-col gap-4">
      <div>
        <h2 className="text-xl font-bold text-brand-strong">Line fill</h2>
        <p className="text-sm text-ink-soft">How much liquid a length of line holds, from its inside diameter.</p>
      </div>
      <form noValidate className="grid gap-3 md:grid-cols-2 md:items-start" onSubmit={(e) => e.preventDefault()} aria-label="Line fill inputs">
        <div className="grid grid-cols-[1fr_auto] gap-3">
          <TextField label="Inside diameter" inputMode="decimal" autoComplete="off" {...register('idValue')} error={formState.errors.idValue?.message ?? serverError('idIn')} />
          <SelectField label="Diameter unit" {...register('idUnit', { deps: ['idValue'] })}>
            <option value="in">in</option>
            <option value="mm">mm</option>
          </SelectField>
        </div>
        <div className="grid grid-cols-[1fr_auto] gap-3">
          <TextField label="Length of line" inputMode="decimal" autoComplete="off" {...register('length')} error={formState.errors.length?.message ?? serverError('lengthFt')} />
          <SelectField label="Length unit" {...register('lengthUnit', { deps: ['length'] })}>
            <option value="ft">ft</option>
            <option value="m">m</option>
          </SelectField>
        </div>
        {basis?.inside ? (
          <Button type="button" variant="secondary" className="text-left md:col-span-2 md:justify-self-start" onClick={fillFromPlug}>
            Use the {basis.text}
          </Button>
        ) : null}
      </form>

      <section aria-label="Line fill figures" aria-live="polite" aria-busy={settling || undefined}>
        {fill.error && !(fill.error instanceof ApiError && fill.error.details.length) ? (
          <Notice tone="danger" role="alert">
            {fill.error.message}
          </Notice>
        ) : null}
        {fill.data ? (
          <div className={`flex flex-col gap-2 ${settling ? 'opacity-60' : ''}`}>
            <dl className="grid grid-cols-1 gap-3 sm:grid-cols-3">
              <div className="rounded-md border border-line bg-paper px-3 py-2">
                <dt className="text-sm text-ink-soft">Barrels</dt>
                <dd className="text-xl font-bold break-words" data-testid="fill-bbl">{`${upTo(fill.data.barrels, 2)} bbl`}</dd>
              </div>
              <div className="rounded-md border border-line bg-paper px-3 py-2">
                <dt className="text-sm text-ink-soft">US gallons</dt>
                <dd className="text-xl font-bold break-words" data-testid="fill-gal">{`${upTo(fill.data.gallons, 1)} US gal`}</dd>
              </div>
              <div className="rounded-md border border-line bg-paper px-3 py-2">
                <dt className="text-sm text-ink-soft">Cubic metres</dt>
                <dd className="text-xl font-bold break-words" data-testid="fill-m3">{`${upTo(fill.data.cubicMetres, 3)} m³`}</dd>
              </div>
            </dl>
            <p className="text-sm">
              {`${fixed(fill.data.bblPerFt, 5)} bbl and ${upTo(fill.data.galPerFt, 3)} US gal per foot of line.`}
            </p>
            <p className="text-xs text-ink-soft">
              Worked from the bore: π/4 × ID² × length, with 1 US gal = 231 in³ and 1 bbl = 42 US gal. Field rule for comparison: bbl/ft = ID²/1029.4 (ID in inches).
            </p>
          </div>
        ) : settling && query ? (
          <Loading label="Working out the line fill…" />
        ) : (
          <p className="text-sm text-ink-soft">Give the inside diameter and the length of line.</p>
        )}
      </section>
    </Card>
  );
}
