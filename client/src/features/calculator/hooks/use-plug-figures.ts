import { useMemo } from 'react';
import { useWatch, type Control } from 'react-hook-form';
import { mmToIn, type PipeDimensions } from '@shared/calc';
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
}

export const scheduleLabel = (schedule: string) => (schedule === 'STD' || schedule === 'XS' ? schedule : `Sch ${schedule}`);

const npsLabel = (nps: number) => {
  const whole = Math.floor(nps);
  const part = { 0.125: '1/8', 0.25: '1/4', 0.375: '3/8', 0.5: '1/2', 0.75: '3/4' }[nps - whole];
  return part ? `${whole ? `${whole} ` : ''}${part}` : upTo(nps, 3);
};

function basisOf(v: MudPlugForm, pipe: PipeDimensions | undefined, pipelines: PipelineChoice[]): DiameterBasis | null {
  switch (v.diameterMode) {
    case 'nominal': {
      const d = Number(v.nominalIn);
      return { diameterIn: d, text: `nominal ${upTo(d, 3)} in`, inside: false };
    }
    case 'schedule': {
      if (!pipe) return null;
      const size = `NPS ${npsLabel(Number(v.nps))} ${scheduleLabel(v.schedule)}, ASME B36.10M`;
      return { diameterIn: pipe.idIn, text: `inside diameter ${fixed(pipe.idIn, 3)} in (${size})`, inside: true };
    }
    case 'measured': {
      const typed = Number(v.measured);
      if (v.measuredUnit === 'mm') {
        const d = mmToIn(typed);
        return { diameterIn: d, text: `inside diameter ${upTo(typed, 1)} mm (${fixed(d, 3)} in), measured`, inside: true };
      }
      return { diameterIn: typed, text: `inside diameter ${fixed(typed, 3)} in, measured`, inside: true };
    }
    case 'register': {
      const line = pipelines.find((p) => p.id === v.pipelineId);
      if (!line || line.insideDiameterIn === null) return null;
      return { diameterIn: line.insideDiameterIn, text: `inside diameter ${fixed(line.insideDiameterIn, 3)} in, from the register (${pipelineLabel(line)})`, inside: true };
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

  return { settled, basis, pipe, plug, settling: key !== settledKey || pipe.isFetching || plug.isFetching };
}
