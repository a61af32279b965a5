import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useCreatePermit } from '../api/create-permit';
import { PermitForm } from '../components/permit-form/permit-form';
import { emptyPermitValues } from '../lib/permit-form-values';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { useOwnContractorOrganisations } from '../hooks/use-own-contractor-organisations';

export default function NewPermitPage() {
  const { timeZone, unit } = useTenantSettings();
  const own = useOwnContractorOrganisations();
  const [defaults] = useState(() => emptyPermitValues(new Date(), timeZone, own.length === 1 ? own[0] : ''));
  const create = useCreatePermit();
  const navigate = useNavigate();
  const toast = useToast();

  return (
    <>
      <PageHeader title="Request a permit" subtitle="Saved as a draft first; send it for approval from the draft's page." />
      <PermitForm
        defaultValues={defaults}
        timeZone={timeZone}
        unit={unit}
        ownOrganisationIds={own}
        submitLabel="Save draft"
        cancelTo="/permits"
        onSave={async (values) => {
          const permit = await create.mutateAsync(values);
          toast('success', `Draft ${permit.number} saved.`);
          navigate(`/permits/${permit.id}`);
        }}
      />
    </>
  );
}
