import { useMe } from '@client/features/auth';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { CrewSection } from '../components/crew-section';
import { LockboxSection } from '../components/lockbox-section';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { usePermitOutlet } from '../lib/permit-outlet';
import { sectionCautions } from '../lib/permit-sections';

/** /permits/:id/crew: who is who on the permit, and signing on and off its lockbox (its own screen and chunk). */
export default function CrewPage() {
  const { permit } = usePermitOutlet();
  const { data: me } = useMe();
  const { timeZone } = useTenantSettings();
  return (
    <div className="mx-auto flex w-full max-w-3xl min-w-0 flex-col gap-4 [&_button]:min-h-12 [&_input]:min-h-12">
      <SafetyCaution>{permit.lockbox.perPerson ? sectionCautions.crew : null}</SafetyCaution>
      <LockboxSection permit={permit} userId={me?.user.id ?? ''} userName={me?.user.name ?? ''} timeZone={timeZone} />
      {permit.lockbox.perPerson ? null : <Notice tone="info">This site does not lock the lockbox per person, so nobody signs on here.</Notice>}
      <CrewSection permit={permit} />
    </div>
  );
}
