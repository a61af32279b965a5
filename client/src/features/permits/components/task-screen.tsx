import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import type { PermitDetail } from '@shared/types/permits';
import { SafetyCaution } from '@client/components/ui/notice';
import { usePermit } from '../api/get-permit';
import { PermitStateBadge } from './permit-state-badge';
import { PermitLoading } from './permit-loading';
import { SuspensionNotice } from './suspension-notice';
import { useTenantSettings } from '../hooks/use-tenant-settings';

// Gloved hands: every field, choice and button of a task screen is at least 48 px tall.
const bigControls = '[&_button]:min-h-12 [&_input:not([type=checkbox]):not([type=radio])]:min-h-12 [&_label:has(input[type=checkbox])]:min-h-12 [&_label:has(input[type=radio])]:min-h-12 [&_select]:min-h-12';

interface Props {
  permitId: string;
  title: (permit: PermitDetail) => string;
  /** The caution's first words for this task; the caution appears once on the screen. */
  caution?: string;
  children: (permit: PermitDetail) => ReactNode;
}

/**
 * A task screen of one permit, for a phone in a gloved hand: the way back to the permit, what the
 * task is, the permit's state, the caution once, then the task's form (its submit button stays at the
 * bottom of the screen).
 */
export function TaskScreen({ permitId, title, caution, children }: Props) {
  const permit = usePermit(permitId);
  const { timeZone } = useTenantSettings();
  if (!permit.isSuccess) return <PermitLoading permit={permit} />;
  const p = permit.data;
  return (
    <div className={`mx-auto flex w-full max-w-xl min-w-0 flex-col gap-3 ${bigControls}`}>
      <p className="text-sm">
        <Link to={`/permits/${encodeURIComponent(p.id)}`} className="inline-flex min-h-12 items-center font-semibold">
          ← {p.number} {p.title}
        </Link>
      </p>
      <div className="flex flex-wrap items-center gap-2">
        <h1 className="text-2xl font-bold break-words text-brand-strong">{title(p)}</h1>
        <PermitStateBadge state={p.state} />
      </div>
      <SuspensionNotice permit={p} timeZone={timeZone} />
      <SafetyCaution>{caution ?? null}</SafetyCaution>
      {children(p)}
    </div>
  );
}
