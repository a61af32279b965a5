import { Link } from 'react-router-dom';
import { subject } from '@casl/ability';
import { crewSignOnStates } from '@shared/permit/states';
import { checkKindLabels } from '@shared/schemas/timed-checks.schema';
import type { PermitDetail } from '@shared/types/permits';
import { useAbility } from '@client/lib/ability';
import { useGasTaskOffers } from '@client/features/gas-tests';
import { stepTaskLabels, useStepTasks } from '@client/features/isolations';

const big = 'flex min-h-14 items-center justify-center rounded-md px-3 py-2 text-center text-base font-semibold no-underline';
const primary = `${big} bg-brand text-white hover:bg-brand-strong`;
const secondary = `${big} border-2 border-brand bg-surface text-brand-strong hover:bg-brand-soft`;

/** Whether this person signs on or off the permit's lockbox here: per-person lockout, and a state where crews sign on. */
export function useCrewTask(permit: PermitDetail, userId: string): 'sign_on' | 'sign_off' | null {
  const ability = useAbility();
  const box = permit.lockbox;
  if (!box.perPerson) return null;
  if (box.crewOn.some((c) => c.userId === userId)) return 'sign_off';
  return crewSignOnStates.includes(permit.state) && ability.can('sign_on', subject('Permit', { ...permit })) ? 'sign_on' : null;
}

/** The task screens this person may use on the permit now, as big one-tap buttons; what their role refuses is not shown. */
export function TaskLinks({ permit, userId }: { permit: PermitDetail; userId: string }) {
  const offers = useGasTaskOffers(permit);
  const steps = useStepTasks(permit, userId);
  const crew = useCrewTask(permit, userId);
  const base = `/permits/${encodeURIComponent(permit.id)}`;
  const links = [
    ...(offers.gasTest ? [{ to: `${base}/gas-test`, label: 'Record a gas test', main: true }] : []),
    ...offers.checks.map((kind) => ({ to: `${base}/check?kind=${kind}`, label: `Record a ${checkKindLabels[kind].toLowerCase()}`, main: false })),
    ...steps.map(({ step, action }) => ({ to: `${base}/steps/${encodeURIComponent(step.id)}/${action}`, label: `${stepTaskLabels[action]} ${step.label}`, main: action !== 'remove' })),
    ...(crew ? [{ to: `${base}/crew`, label: crew === 'sign_on' ? 'Sign on the lockbox' : 'Sign off the lockbox', main: false }] : []),
  ];
  if (!links.length) return null;
  return (
    <nav aria-label="Your tasks on this permit" className="flex flex-col gap-2">
      <h2 className="text-lg font-semibold">Your tasks</h2>
      <ul className="grid grid-cols-2 gap-2" data-testid="task-links">
        {links.map((l) => (
          <li key={l.to} className="min-w-0">
            <Link to={l.to} className={`${l.main ? primary : secondary} h-full w-full break-words`}>
              {l.label}
            </Link>
          </li>
        ))}
      </ul>
    </nav>
  );
}
