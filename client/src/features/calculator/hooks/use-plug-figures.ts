import { useMemo } from 'react';
import { useWatch, type Control } from 'react-hook-form';
import { mmToIn, scheduleLabel, type PipeDimensions } from '@shared/calc';
import { mudPlugFormSchema, type MudPlugForm } from '@shared/schemas/calc.schema';
import { useMudPlug } from '../api/get-mud-plug';
import { usePipeDimensions } from '../api/get-pipe-dimensions';
import { pipelineLabel, type PipelineChoice } from '../api/get-pipelines';
import { fixed, upTo } from '../lib/format';
import { useDebouncedValue } from './use-debounced-value';

/** The diameter the figures were worked out for, and the words that say which one it was. */
export interface DiameterBasis {
  diameterIn: number;
  text: string;
  /** A bore (inside diameter), as line fill needs; false for a nominal size. */
  inside: boolean;
  /** The nominal size, when known: the D that D³/16 takes. */
  nominalIn: number | null;
}

const npsLabel = (nps: number) => {
  const whole = Math.floor(nps);
  const part = { 0.125: '1/8', 0.25: '1/4', 0.375: '3/8', 0.5: '1/2', 0.75: '3/4' }[nps - whole];
  return part ? `${whole ? `${whole} ` : ''}${part}` : upTo(nps, 3);
};

function basisOf(v: MudPlugForm, pipe: PipeDimensions | undefined, pipelines: PipelineChoice[]): DiameterBasis | null {
  switch (v.diameterMode) {
    case 'nominal': {
      const d = Number(v.nominalIn);
      return { diameterIn: d, text: `nominal ${upTo(d, 3)} in`, inside: false, nominalIn: d };
    }
    case 'schedule': {
      if (!pipe) return null;
      const size = `NPS ${npsLabel(Number(v.nps))} ${scheduleLabel(v.schedule)}, ASME B36.10M`;
      return { diameterIn: pipe.idIn, text: `inside diameter ${fixed(pipe.idIn, 3)} in (${size})`, inside: true, nominalIn: Number(v.nps) };
    }
    case 'measured': {
      const typed = Number(v.measured);
      if (v.measuredUnit === 'mm') {
        const d = mmToIn(typed);
        return { diameterIn: d, text: `inside diameter ${upTo(typed, 1)} mm (${fixed(d, 3)} in), measured`, inside: true, nominalIn: null };
      }
      return { diameterIn: typed, text: `inside diameter ${fixed(typed, 3)} in, measured`, inside: true, nominalIn: null };
    }
    case 'register': {
      const line = pipelines.find((p) => p.id === v.pipelineId);
      if (!line || line.insideDiameterIn === null) return null;
      return { diameterIn: line.insideDiameterIn, text: `inside diameter ${fixed(line.insideDiameterIn, 3)} in, from the register (${pipelineLabel(line)})`, inside: true, nominalIn: line.nps };
    }
  }
}

/**
 * Follows the plug form: once the inputs have been still for a moment and are valid, asks the
 * server for the pipe's bore (when sized by NPS and schedule) and then for the plug.
 */
export function usePlugFigures(control: Control<MudPlugForm>, pipelines: PipelineChoice[]) {
  const values = useWatch({ control });
  const key = JSON.stringify(values);
  const settledKey = useDebouncedValue(key, 300);
  const settled = useMemo(() => {
    const parsed = mudPlugFormSchema.safeParse(JSON.parse(settledKey));
    return parsed.success ? parsed.data : null;
  }, [settledKey]);

  const pipe = usePipeDimensions(settled?.diameterMode === 'schedule' ? { nps: Number(settled.nps), schedule: settled.schedule } : null);
  const basis = settled ? basisOf(settled, pipe.data, pipelines) : null;
  const waterFraction = settled ? Number(settled.ratio === 'custom' ? settled.customWaterFraction : settled.ratio) : null;
  const plug = useMudPlug(basis && waterFraction !== null ? { diameterIn: basis.diameterIn, waterFraction } : null);
  // D³/16 takes the nominal size; when the figures above are for a bore, the nominal size's paste is asked for too.
  const byNominal = useMudPlug(basis?.inside && basis.nominalIn !== null && waterFraction !== null ? { diameterIn: basis.nominalIn, waterFraction } : null);
  const sideBySide = basis
    ? {
        nominalIn: basis.nominalIn,
        nominal: basis.inside ? (basis.nominalIn === null ? null : (byNominal.data ?? null)) : (plug.data ?? null),
        boreIn: basis.inside ? basis.diameterIn : null,
        bore: basis.inside ? (plug.data ?? null) : null,
      }
    : null;

  return { settled, basis, pipe, plug, sideBySide, settling: key !== settledKey || pipe.isFetching || plug.isFetching || byNominal.isFetching };
}
