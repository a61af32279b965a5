import { GASES, type AtmosphereAssessment, type Gas, type GasBound, type GasResult, type GasUnit } from '@shared/calc';

const GAS_LABEL: Record<Gas, string> = {
  o2: 'Oxygen (O₂)',
  lel: 'Flammable gas',
  h2s: 'Hydrogen sulphide (H₂S)',
  co: 'Carbon monoxide (CO)',
};

const UNIT_LABEL: Record<GasUnit, string> = { '%vol': '% vol', '%LEL': '% LEL', ppm: 'ppm' };

function describeLimit({ min, max, unit }: GasBound) {
  const u = UNIT_LABEL[unit];
  if (min !== undefined && max !== undefined) return `${min}–${max} ${u}`;
  if (max !== undefined) return `at most ${max} ${u}`;
  if (min !== undefined) return `at least ${min} ${u}`;
  return 'no limit';
}

type Look = { label: string; mark: string; box: string; badge: string };

// ISO 3864 meanings: green = safe condition, red = danger, yellow = caution. The word and the mark
// say the same as the colour, so the verdict never rests on colour alone.
function lookOf(gas: GasResult): Look {
  if (gas.verdict === 'pass') return { label: 'Pass', mark: '✓', box: 'border-safe bg-safe-soft', badge: 'bg-safe text-white' };
  if (gas.verdict === 'fail') return { label: 'Fail', mark: '✕', box: 'border-danger bg-danger-soft', badge: 'bg-danger text-white' };
  if (gas.required) return { label: 'Not measured (required)', mark: '!', box: 'border-caution bg-caution-soft', badge: 'bg-caution text-ink' };
  return { label: 'Not measured', mark: '–', box: 'border-line bg-surface', badge: 'border border-line bg-paper text-ink' };
}

export interface AtmosphereReadoutProps {
  result: AtmosphereAssessment;
  /** Dims the readout while newer readings are being judged. */
  busy?: boolean;
}

/** One gas test judged: the overall verdict, then each reading against its limit and where the limit comes from. */
export function AtmosphereReadout({ result, busy = false }: AtmosphereReadoutProps) {
  const pass = result.verdict === 'pass';
  return (
    <div className={`flex flex-col gap-3 ${busy ? 'opacity-60' : ''}`} aria-busy={busy || undefined} data-testid="atmosphere-readout">
      <div role="status" className={`flex items-start gap-3 rounded-card border-l-4 px-4 py-3 ${pass ? 'border-safe bg-safe-soft' : 'border-danger bg-danger-soft'}`} data-testid="atmosphere-verdict">
        <span aria-hidden className={`flex size-8 shrink-0 items-center justify-center rounded-full text-lg font-bold text-white ${pass ? 'bg-safe' : 'bg-danger'}`}>
          {pass ? '✓' : '✕'}
        </span>
        <div>
          <p className="font-bold">{pass ? 'Pass: every reading is within its limit' : 'Fail: do not start or carry on with the work on these readings'}</p>
          <p className="text-sm">
            {result.hotWork ? 'Judged against the hot-work limits.' : 'Judged against the general limits (no hot work).'}
            {pass ? '' : ' A reading is outside its limit, or a required gas was not measured.'}
          </p>
        </div>
      </div>
      <ul className="grid gap-3 md:grid-cols-2">
        {GASES.map((key) => {
          const gas = result.gases[key];
          const look = lookOf(gas);
          return (
            <li key={key} className={`min-w-0 rounded-card border-l-4 px-4 py-3 ${look.box}`} data-testid={`gas-${key}`} data-verdict={gas.verdict}>
              <div className="flex flex-wrap items-center justify-between gap-2">
                <p className="font-semibold">{GAS_LABEL[key]}</p>
                <span className={`inline-flex items-center gap-1 rounded-full px-3 py-1 text-sm font-bold ${look.badge}`}>
                  <span aria-hidden>{look.mark}</span>
                  {look.label}
                </span>
              </div>
              <dl className="mt-1 grid grid-cols-[auto_1fr] gap-x-3 text-sm">
                <dt className="text-ink-soft">Reading</dt>
                <dd>{gas.value === null ? 'none' : `${gas.value} ${UNIT_LABEL[gas.limit.unit]}`}</dd>
                <dt className="text-ink-soft">Limit</dt>
                <dd>
                  {describeLimit(gas.limit)}
                  {key === 'lel' && result.hotWork ? ' (hot work)' : ''}
                </dd>
              </dl>
              <p className="mt-1 text-sm">{gas.message}</p>
              <p className="mt-1 text-xs break-words text-ink-soft">Limit source: {gas.source}</p>
            </li>
          );
        })}
      </ul>
    </div>
  );
}
