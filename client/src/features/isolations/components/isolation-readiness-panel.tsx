import { useId } from 'react';
import { subject } from '@casl/ability';
import { formatPressure } from '@shared/calc/pressure';
import type { PermitState } from '@shared/permit/states';
import { statesFrom } from '@shared/permit/state-machine';
import type { IsolationStep } from '@shared/types/isolations';
import type { IsolationPlanReadiness, IsolationProving } from '@shared/types/isolation-proving';
import { formatInZone } from '@shared/time/zone';
import { useAbility } from '@client/lib/ability';
import { EnteredLate } from '@client/components/ui/entered-late';
import { Notice } from '@client/components/ui/notice';
import { ProvingForm } from './proving-form';

export interface ReadinessPermit {
  id: string;
  tenantId: string;
  state: PermitState;
  contractorOrganisationId: string;
}

interface Props {
  permit: ReadinessPermit;
  steps: IsolationStep[];
  readiness: IsolationPlanReadiness;
  timeZone: string;
}

const resultWords: Record<IsolationProving['result'], string> = { running: 'Running', proved: 'Proved dead', failed: 'Failed' };

function ProvingRow({ p, timeZone }: { p: IsolationProving; timeZone: string }) {
  return (
    <li className="text-sm" data-testid="proving-row" data-result={p.result}>
      <span className={`font-semibold ${p.result === 'failed' ? 'text-danger' : ''}`}>{resultWords[p.result]}</span> at {p.at}: {formatPressure(p.startReading, p.unit)} at{' '}
      {formatInZone(p.startedAt, timeZone)} ({p.startedByName}){p.startedEnteredLate ? <EnteredLate /> : null}
      {p.endedAt && p.endReading !== null ? (
        <>
          , then {formatPressure(p.endReading, p.unit)} at {formatInZone(p.endedAt, timeZone)} ({p.endedByName}){p.endedEnteredLate ? <EnteredLate /> : null}
        </>
      ) : null}
      . Limit {formatPressure(p.maxPressure, p.maxPressureUnit)}, hold {p.holdMinutes} min{p.failure ? `; ${p.failure}` : ''}.
      {p.notes ? <span className="block text-ink-soft">{p.notes}</span> : null}
    </li>
  );
}

/**
 * Where the isolations stand against Isolated: what still blocks it (isolating devices per side, the
 * section proved dead, the authoriser's signature), the hold tests, and the form to record one.
 */
export function IsolationReadinessPanel({ permit, steps, readiness, timeZone }: Props) {
  const headingId = useId();
  const ability = useAbility();
  // The section is proved, and the isolations signed in place, while the permit waits to be isolated.
  const beforeSignature = statesFrom('confirm_isolated').includes(permit.state);
  const canProve = beforeSignature && ability.can('verify', subject('IsolationStep', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId }));
  const canSign = beforeSignature && ability.can('approve', subject('Permit', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId }));
  const running = readiness.provings.find((p) => p.result === 'running') ?? null;
  if (!readiness.signature && !readiness.blockers.length && !readiness.provings.length) return null;

  return (
    <section aria-labelledby={headingId} className="flex flex-col gap-3" data-testid="isolation-readiness">
      <h3 id={headingId} className="font-semibold">
        Isolations in place
      </h3>
      {readiness.signature ? (
        <Notice tone="safe" title="Isolations signed in place" role="status">
          <p data-testid="isolation-signature">
            Signed by {readiness.signature.name}, {formatInZone(readiness.signature.at, timeZone)}, after the section was proved dead.
          </p>
        </Notice>
      ) : readiness.blockers.length ? (
        <Notice tone="caution" title="What still blocks Isolated" role="status">
          <ul className="list-disc pl-5" data-testid="isolation-blockers">
            {readiness.blockers.map((b) => (
              <li key={b} className="break-words">
                {b}
              </li>
            ))}
          </ul>
          {canSign ? <p className="mt-2">When nothing else is left, sign with “Sign isolations in place” under What you can do now (your password and your name).</p> : null}
        </Notice>
      ) : null}
      <ul className="flex flex-col gap-1 text-sm" aria-label="Isolating devices on each side of the work">
        {readiness.sides.map((s) => (
          <li key={s.side}>
            <span className="font-semibold">{s.side === 'upstream' ? 'Upstream' : 'Downstream'}:</span>{' '}
            {s.deadEnd ? `dead end (${s.deadEnd})` : s.planned ? `${s.verified} of ${s.planned} isolating device(s) verified` : 'no isolating device'}
          </li>
        ))}
      </ul>
      {readiness.provings.length ? (
        <ol className="flex flex-col gap-1" aria-label="Hold tests of the section, oldest first">
          {readiness.provings.map((p) => (
            <ProvingRow key={p.id} p={p} timeZone={timeZone} />
          ))}
        </ol>
      ) : null}
      {canProve ? <ProvingForm key={running?.id ?? 'new'} permitId={permit.id} steps={steps} running={running} limits={readiness.limits} timeZone={timeZone} /> : null}
    </section>
  );
}
