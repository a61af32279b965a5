import { Link } from 'react-router-dom';
import { subject } from '@casl/ability';
import { editableStates, liveStates } from '@shared/permit/states';
import { useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { DueNext } from '@client/features/gas-tests';
import { PermitCertificateLine } from '@client/features/certificates';
import { Card } from '@client/components/ui/page';
import { SafetyCaution } from '@client/components/ui/notice';
import { PermitActions } from '../components/permit-actions';
import { HotWorkPanel } from '../components/hot-work-panel';
import { PrintPermitLink } from '../components/print-permit-link';
import { TaskLinks } from '../components/task-links';
import { linkButtonClass } from '../components/link-button';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { usePermitOutlet } from '../lib/permit-outlet';
import { hazardCaution } from '../lib/permit-sections';

/**
 * The permit at a glance, sized for a phone: who holds it, what falls due next, the tasks and steps
 * this person can take now (with what still blocks each), and the caution, once. The details are in
 * the sections, one tap away.
 */
export default function PermitSummary() {
  const { permit: p, refetch } = usePermitOutlet();
  const { data: me } = useMe();
  const ability = useAbility();
  const { timeZone } = useTenantSettings();
  const canEdit = editableStates.includes(p.state) && ability.can('update', subject('Permit', { ...p }));

  return (
    <div className="grid min-w-0 gap-4 lg:grid-cols-2" data-testid="permit-summary">
      <div className="flex min-w-0 flex-col gap-4">
        <Card>
          <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm" aria-label="Who holds the permit">
            <dt className="font-semibold">Holder</dt>
            <dd className="break-words">{p.holderName ?? 'Not accepted yet'}</dd>
            <dt className="font-semibold">Contractor</dt>
            <dd className="break-words">
              {p.contractorName}
              {p.contractorLeadName ? `, lead ${p.contractorLeadName}` : ''}
            </dd>
            <dt className="font-semibold">Authoriser</dt>
            <dd className="break-words">{p.authoriserName ?? 'Not approved yet'}</dd>
          </dl>
          {liveStates.includes(p.state) ? (
            <div className="mt-3 flex flex-col gap-2">
              <h2 className="text-lg font-semibold">Due next</h2>
              <DueNext permit={p} />
            </div>
          ) : null}
        </Card>
        <TaskLinks permit={p} userId={me?.user.id ?? ''} />
      </div>
      <div className="flex min-w-0 flex-col gap-4">
        <Card>
          <section aria-label="Actions on this permit">
            <h2 className="mb-3 text-lg font-semibold">What you can do now</h2>
            <div className="flex flex-col gap-3">
              {canEdit ? (
                <Link to={`/permits/${p.id}/edit`} className={`${linkButtonClass.secondary} w-full`}>
                  Edit draft
                </Link>
              ) : null}
              <PermitActions permit={p} userName={me?.user.name ?? ''} timeZone={timeZone} onConflict={refetch} />
              <HotWorkPanel permit={p} timeZone={timeZone} />
              <PrintPermitLink permit={p} />
              <PermitCertificateLine permitId={p.id} />
            </div>
          </section>
        </Card>
        <SafetyCaution>{hazardCaution(p.kinds)}</SafetyCaution>
      </div>
    </div>
  );
}
