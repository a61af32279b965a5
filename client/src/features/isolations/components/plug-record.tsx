import { BENTONITE_WEIGH_NOTE, MUD_PLUG_CAUTION, SMALL_BORE_PLUG_ADVICE, mudPlug, testedSizesCaution, type PlugWarning } from '@shared/calc';
import { formatInZone } from '@shared/time/zone';
import { Notice } from '@client/components/ui/notice';
import type { IsolationStep } from '@shared/types/isolations';
import { usePlugUnits } from '../lib/plug-units';


/** The plug a pipe of this diameter needs (D³/16 lb of paste, half water by default, 1.5 × D long), or null if the diameter is unusable. */
export function plugTargets(diameterIn: number | null | undefined) {
  if (!diameterIn) return null;
  try {
    return mudPlug({ diameterIn });
  } catch {
    return null;
  }
}

function Figure({ label, value, testId }: { label: string; value: string; testId: string }) {
  return (
    <div className="min-w-0 rounded-md border border-line bg-paper px-2 py-1">
      <dt className="text-xs text-ink-soft">{label}</dt>
      <dd className="font-semibold" data-testid={testId}>
        {value}
      </dd>
    </div>
  );
}

export function PlugWarnings({ warnings, title = 'The plug as built is outside the rules' }: { warnings: Pick<PlugWarning, 'code' | 'message'>[]; title?: string }) {
  if (!warnings.length) return null;
  return (
    <Notice tone="caution" title={title}>
      <ul className="list-disc pl-5" data-testid="plug-warnings">
        {warnings.map((w) => (
          <li key={w.code}>{w.message}</li>
        ))}
      </ul>
    </Notice>
  );
}

/** A plug step's quantities to build it, and what was built. */
export function PlugRecord({ step, timeZone }: { step: IsolationStep; timeZone: string }) {
  const target = plugTargets(step.plugDiameterIn);
  const built = step.plugAsBuilt;
  const u = usePlugUnits();
  return (
    <div className="flex flex-col gap-2" data-testid="plug-record">
      {target ? (
        <>
          <p className="text-sm font-semibold">To build in the {step.plugDiameterIn}-in pipe</p>
          <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4">
            <Figure label="Bentonite" value={u.mass(target.bentoniteLb)} testId="plug-target-bentonite" />
            <Figure label="Water" value={u.water(target.waterLb)} testId="plug-target-water" />
            <Figure label="Length (1.5 × diameter)" value={u.length(target.plugLengthIn)} testId="plug-target-length" />
            <Figure label="Balls about 3 in across" value={target.mudBalls === null ? 'None: bore too small' : String(target.mudBalls)} testId="plug-target-balls" />
          </dl>
          {target.mudBalls === null ? <p className="text-sm">{SMALL_BORE_PLUG_ADVICE}</p> : null}
          {step.plugDiameterIn && testedSizesCaution(step.plugDiameterIn) ? <p className="text-sm">{testedSizesCaution(step.plugDiameterIn)}</p> : null}
        </>
      ) : (
        <p className="text-sm text-danger">No usable pipe diameter on this step: the plug quantities cannot be worked out.</p>
      )}
      <p className="text-sm text-ink-soft" data-testid="mud-plug-caution">
        {MUD_PLUG_CAUTION}
      </p>
      <p className="text-sm text-ink-soft">{BENTONITE_WEIGH_NOTE}</p>
      {built ? (
        <div className="flex flex-col gap-2">
          <p className="text-sm">
            <span className="font-semibold">As built</span> {formatInZone(built.builtAt, timeZone)}: bentonite <span data-testid="plug-built-bentonite">{u.mass(built.bentoniteLb)}</span>, water <span data-testid="plug-built-water">{u.water(built.waterLb)}</span>, length {u.length(built.lengthIn)}.
          </p>
          <PlugWarnings warnings={step.plugWarnings} />
          {step.plugWarnings.length && step.plugWarningsAckAt ? (
            <p className="text-sm text-ink-soft">Warnings acknowledged by the authoriser {formatInZone(step.plugWarningsAckAt, timeZone)}.</p>
          ) : null}
        </div>
      ) : null}
    </div>
  );
}
