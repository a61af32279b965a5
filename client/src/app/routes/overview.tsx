import { Link } from 'react-router-dom';
import { roleLabels } from '@shared/abilities/roles';
import { useMe } from '@client/features/auth/api/get-me';
import { useAbility } from '@client/lib/ability';
import { Card, PageHeader } from '@client/components/ui/page';
import { SafetyCaution } from '@client/components/ui/notice';
import { visibleNav } from '../navigation';

export default function OverviewPage() {
  const { data: me } = useMe();
  const ability = useAbility();
  const roles = me?.memberships.filter((m) => m.tenantId === me.activeTenantId) ?? [];
  return (
    <>
      <PageHeader title={me?.activeTenant?.name ?? 'Holdpoint'} subtitle={`Signed in as ${me?.user.name} — ${roles.map((r) => `${roleLabels[r.role]} (${r.organisationName})`).join(', ')}`} />
      <div className="grid gap-4 md:grid-cols-2">
        <Card>
          <h2 className="mb-2 text-lg font-semibold">Where to go</h2>
          <ul className="flex flex-col gap-1">
            {visibleNav(ability)
              .filter((n) => n.to !== '/')
              .map((n) => (
                <li key={n.to}>
                  <Link to={n.to} className="inline-flex min-h-11 items-center">
                    {n.label}
                  </Link>
                </li>
              ))}
          </ul>
        </Card>
        <SafetyCaution />
      </div>
    </>
  );
}
