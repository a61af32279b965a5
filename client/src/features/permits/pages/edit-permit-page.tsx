import { Navigate, useNavigate, useParams } from 'react-router-dom';
import { editableStates } from '@shared/permit/states';
import { ApiError } from '@client/lib/api-client';
import { Loading, PageHeader } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { usePermit } from '../api/get-permit';
import { useUpdatePermit } from '../api/update-permit';
import { PermitForm } from '../components/permit-form/permit-form';
import { PermitNotFound } from '../components/permit-not-found';
import { permitToFormValues } from '../lib/permit-form-values';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import { useOwnContractorOrganisations } from '../hooks/use-own-contractor-organisations';

export default function EditPermitPage() {
  const { id = '' } = useParams();
  const permit = usePermit(id);
  const update = useUpdatePermit(id);
  const { timeZone, unit } = useTenantSettings();
  const own = useOwnContractorOrganisations();
  const navigate = useNavigate();
  const toast = useToast();

  if (permit.isPending) return <Loading label="Loading the permit…" />;
  if (permit.isError) {
    if (permit.error instanceof ApiError && permit.error.status === 404) return <PermitNotFound />;
    return (
      <Notice tone="danger" role="alert" title="The permit could not be loaded.">
        {permit.error.message}
      </Notice>
    );
  }
  const p = permit.data;
  if (!editableStates.includes(p.state)) return <Navigate to={`/permits/${p.id}`} replace />;

  return (
    <>
      <PageHeader title={`Edit draft ${p.number}`} subtitle={p.title} />
      {p.rejectionReason ? (
        <div className="mb-4">
          <Notice tone="caution" title="Sent back by the authoriser">
            {p.rejectionReason}
          </Notice>
        </div>
      ) : null}
      <PermitForm
        key={`${p.id}:${p.version}`}
        defaultValues={permitToFormValues(p)}
        timeZone={timeZone}
        unit={unit}
        ownOrganisationIds={own}
        submitLabel="Save changes"
        cancelTo={`/permits/${p.id}`}
        onSave={async (values) => {
          try {
            await update.mutateAsync({ ...values, version: p.version });
          } catch (err) {
            if (err instanceof ApiError && err.status === 409) {
              toast('error', 'Someone changed this permit — reloaded. Check it and make your change again.');
              await permit.refetch();
              return;
            }
            throw err;
          }
          toast('success', `Draft ${p.number} saved.`);
          navigate(`/permits/${p.id}`);
        }}
      />
    </>
  );
}
