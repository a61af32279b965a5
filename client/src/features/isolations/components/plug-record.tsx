import { MUD_PLUG_CAUTION, mudPlug, type PlugWarning } from '@shared/calc';
import { formatInZone } from '@shared/time/zone';
import { Notice } from '@client/components/ui/notice';
import type { IsolationStep } from '@shared/types/isolations';

const lb = (v: number) => `${Number(v.toFixed(1))} lb`;
const inch = (v: number) => `${Number(v.toFixed(1))} in`;

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
  return (
    <div className="flex flex-col gap-2" data-testid="plug-record">
      {target ? (
        <>
          <p className="text-sm font-semibold">To build in the {step.plugDiameterIn}-in pipe</p>
          <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4">
            <Figure label="Bentonite" value={lb(target.bentoniteLb)} testId="plug-target-bentonite" />
            <Figure label="Water" value={`${lb(target.waterLb)} (${Number(target.waterGal.toFixed(2))} US gal)`} testId="plug-target-water" />
            <Figure label="Length (1.5 × diameter)" value={inch(target.plugLengthIn)} testId="plug-target-length" />
            <Figure label="Balls about 3 in across" value={String(target.mudBalls)} testId="plug-target-balls" />
          </dl>
        </>
      ) : (
        <p className="text-sm text-danger">No usable pipe diameter on this step: the plug quantities cannot be worked out.</p>
      )}
      <p className="text-sm text-ink-soft" data-testid="mud-plug-caution">
        {MUD_PLUG_CAUTION}
      </p>
      {built ? (
        <div className="flex flex-col gap-2">
          <p className="text-sm">
            <span className="font-semibold">As built</span> {formatInZone(built.builtAt, timeZone)}: bentonite {lb(built.bentoniteLb)}, water {lb(built.waterLb)}, length {inch(built.lengthIn)}.
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
