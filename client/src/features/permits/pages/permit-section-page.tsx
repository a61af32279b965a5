import { Link, useParams } from 'react-router-dom';
import { IsolationPlanSection } from '@client/features/isolations';
import { ChecksSection, GasTestsSection, HandoverSection } from '@client/features/gas-tests';
import { AttachmentsPanel } from '@client/features/attachments';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { JobSection } from '../components/job-section';
import { PlaceSection } from '../components/place-section';
import { ChecklistSection } from '../components/checklist-section';
import { SignaturesSection } from '../components/signatures-section';
import { TimelineSection } from '../components/timeline-section';
import { AttachmentsSlot } from '../components/attachments-slot';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { usePermitOutlet } from '../lib/permit-outlet';
import { hazardCaution, isPermitSection, sectionCautions, type PermitSectionSlug } from '../lib/permit-sections';

function Section({ slug }: { slug: Exclude<PermitSectionSlug, 'crew'> }) {
  const { permit: p } = usePermitOutlet();
  const { timeZone, unit } = useTenantSettings();
  switch (slug) {
    case 'job':
      return <JobSection permit={p} />;
    case 'place':
      return <PlaceSection permit={p} unit={unit} />;
    case 'isolations':
      return <IsolationPlanSection permit={p} />;
    case 'checklist':
      return <ChecklistSection permit={p} timeZone={timeZone} />;
    case 'gas-tests':
      return <GasTestsSection permit={p} />;
    case 'checks':
      return <ChecksSection permit={p} />;
    case 'handovers':
      return <HandoverSection permit={p} />;
    case 'signatures':
      return <SignaturesSection permit={p} timeZone={timeZone} />;
    case 'timeline':
      return <TimelineSection permit={p} timeZone={timeZone} />;
    case 'attachments':
      return (
        <AttachmentsSlot permitId={p.id}>
          <AttachmentsPanel permit={p} />
        </AttachmentsSlot>
      );
  }
}

/** One section of the permit at /permits/:id/<section>, with the caution once for the screen. */
export default function PermitSectionPage() {
  const { id = '', section } = useParams();
  const { permit: p } = usePermitOutlet();
  if (!isPermitSection(section) || section === 'crew') {
    return (
      <Notice tone="caution" role="status" title="There is no such part of a permit.">
        <Link to={`/permits/${encodeURIComponent(id)}`} className="inline-flex min-h-11 items-center">
          Open the permit&apos;s summary
        </Link>
      </Notice>
    );
  }
  return (
    <div className="flex min-w-0 flex-col gap-4">
      <SafetyCaution>{sectionCautions[section] ?? hazardCaution(p.kinds)}</SafetyCaution>
      <Section slug={section} />
    </div>
  );
}
