import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';
import { Detail, DetailList } from './detail-list';

export function CrewSection({ permit }: { permit: PermitDetail }) {
  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Crew</h2>
      <DetailList>
        <Detail label="Contractor">{permit.contractorName}</Detail>
        <Detail label="Contractor lead">{permit.contractorLeadName ?? 'Named when the permit is accepted'}</Detail>
        <Detail label="Permit holder">{permit.holderName ?? 'Not accepted yet'}</Detail>
        <Detail label="Requested by">{permit.requesterName}</Detail>
        <Detail label="Authoriser">{permit.authoriserName ?? 'Not approved yet'}</Detail>
      </DetailList>
    </Card>
  );
}
