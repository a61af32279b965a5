import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { organisationInputSchema, type OrganisationInput } from '@shared/schemas/auth.schema';
import { ApiError } from '@client/lib/api-client';
import { Can } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Card, EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useCreateOrganisation, useOrganisations } from '../api/admin-queries';

export default function OrganisationsPage() {
  const orgs = useOrganisations();
  const create = useCreateOrganisation();
  const toast = useToast();
  const form = useForm<OrganisationInput>({ resolver: zodResolver(organisationInputSchema), defaultValues: { name: '', kind: 'contractor' } });
  return (
    <>
      <PageHeader title="Organisations" subtitle="The operator's own organisation and the contractors it hires." />
      <div className="flex flex-col gap-4">
        <Can I="create" a="Organisation">
          <Card>
            <form
              noValidate
              className="grid gap-3 md:grid-cols-3 md:items-end"
              onSubmit={form.handleSubmit((v) =>
                create.mutate(v, {
                  onSuccess: () => {
                    toast('success', `${v.name} added.`);
                    form.reset();
                  },
                  onError: (e) => (e instanceof ApiError && e.details.length ? e.details.forEach((d) => form.setError(d.path as keyof OrganisationInput, { message: d.message })) : form.setError('name', { message: e.message })),
                }),
              )}
            >
              <TextField label="Name" {...form.register('name')} error={form.formState.errors.name?.message} />
              <SelectField label="Kind" {...form.register('kind')}>
                <option value="contractor">Contractor</option>
                <option value="operator">Operator</option>
              </SelectField>
              <Button type="submit" busy={create.isPending}>
                Add organisation
              </Button>
            </form>
          </Card>
        </Can>
        {orgs.isPending ? (
          <Loading />
        ) : !orgs.data?.items.length ? (
          <EmptyState title="No organisations yet." />
        ) : (
          <ul className="grid gap-3 md:grid-cols-2">
            {orgs.data.items.map((o) => (
              <li key={o.id} className="rounded-card border border-line bg-surface p-4">
                <p className="font-semibold">{o.name}</p>
                <p className="text-sm text-ink-soft">
                  {o.kind === 'operator' ? 'Operator' : 'Contractor'} · {o.members} {o.members === 1 ? 'person' : 'people'}
                </p>
              </li>
            ))}
          </ul>
        )}
      </div>
    </>
  );
}
