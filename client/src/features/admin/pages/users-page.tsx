import { useMemo } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { ColumnDef } from '@tanstack/react-table';
import { inviteInputSchema, usersQuerySchema, type InviteInput } from '@shared/schemas/auth.schema';
import type { UserRow } from '@shared/types/admin';
import { roleLabels, roles, type Role } from '@shared/abilities/roles';
import { ApiError } from '@client/lib/api-client';
import { Can } from '@client/lib/ability';
import { useListQuery } from '@client/lib/list-query';
import { DataTable } from '@client/components/ui/data-table';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Card, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useChangeRole, useInvite, useOrganisations, useUsers } from '../api/admin-queries';

function InviteForm() {
  const orgs = useOrganisations();
  const invite = useInvite();
  const toast = useToast();
  const form = useForm<InviteInput>({ resolver: zodResolver(inviteInputSchema), defaultValues: { email: '', organisationId: '', role: 'isolation_technician' } });
  const submit = form.handleSubmit((values) =>
    invite.mutate(values, {
      onSuccess: (r) => {
        toast('success', `Invitation sent to ${r.email}.`);
        form.reset({ ...values, email: '' });
      },
      onError: (e) => {
        if (e instanceof ApiError) e.details.forEach((d) => form.setError(d.path as keyof InviteInput, { message: d.message }));
        toast('error', e.message);
      },
    }),
  );
  return (
    <Card>
      <h2 className="mb-3 text-lg font-semibold">Invite someone</h2>
      <form noValidate onSubmit={submit} className="grid gap-3 md:grid-cols-4 md:items-end">
        <TextField label="E-mail" type="email" {...form.register('email')} error={form.formState.errors.email?.message} />
        <SelectField label="Organisation" {...form.register('organisationId')} error={form.formState.errors.organisationId && !form.getValues('organisationId') ? 'Choose an organisation.' : form.formState.errors.organisationId?.message}>
          <option value="">Choose…</option>
          {orgs.data?.items.map((o) => (
            <option key={o.id} value={o.id}>
              {o.name} ({o.kind})
            </option>
          ))}
        </SelectField>
        <SelectField label="Role" {...form.register('role')} error={form.formState.errors.role?.message}>
          {roles.map((r) => (
            <option key={r} value={r}>
              {roleLabels[r]}
            </option>
          ))}
        </SelectField>
        <Button type="submit" busy={invite.isPending}>
          Send invitation
        </Button>
      </form>
    </Card>
  );
}

export default function UsersPage() {
  const { query: q, set } = useListQuery(usersQuerySchema);
  const users = useUsers(q);
  const changeRole = useChangeRole();
  const toast = useToast();

  const columns = useMemo<ColumnDef<UserRow, unknown>[]>(
    () => [
      { id: 'name', header: 'Name', accessorKey: 'name' },
      { id: 'email', header: 'E-mail', accessorKey: 'email' },
      { id: 'organisation', header: 'Organisation', accessorKey: 'organisationName' },
      {
        id: 'role',
        header: 'Role',
        cell: ({ row }) => (
          <Can I="update" a="Membership" passThrough>
            {({ isAllowed }) =>
              isAllowed ? (
                <select
                  aria-label={`Role of ${row.original.name} in ${row.original.organisationName}`}
                  className="min-h-11 rounded-md border border-line px-2"
                  value={row.original.role}
                  onChange={(e) =>
                    changeRole.mutate(
                      { membershipId: row.original.membershipId, role: e.target.value as Role },
                      { onSuccess: () => toast('success', 'Role changed.'), onError: (err) => toast('error', err.message) },
                    )
                  }
                >
                  {roles.map((r) => (
                    <option key={r} value={r}>
                      {roleLabels[r]}
                    </option>
                  ))}
                </select>
              ) : (
                roleLabels[row.original.role]
              )
            }
          </Can>
        ),
      },
    ],
    [changeRole, toast],
  );

  return (
    <>
      <PageHeader title="People" subtitle="Everyone with a role in this tenant, one row per role." />
      <div className="flex flex-col gap-4">
        <Can I="create" a="Invitation">
          <InviteForm />
        </Can>
        <div className="grid gap-3 md:grid-cols-3">
          <TextField label="Search name or e-mail" type="search" defaultValue={q.q} onChange={(e) => set({ q: e.target.value || undefined, page: undefined })} />
          <SelectField label="Show role" value={q.role ?? ''} onChange={(e) => set({ role: e.target.value || undefined, page: undefined })}>
            <option value="">All roles</option>
            {roles.map((r) => (
              <option key={r} value={r}>
                {roleLabels[r]}
              </option>
            ))}
          </SelectField>
        </div>
        <DataTable
          caption="People in this tenant"
          columns={columns}
          data={users.data}
          isLoading={users.isPending}
          page={q.page}
          onPage={(p) => set({ page: String(p) })}
          sorting={[{ id: q.sort, desc: q.dir === 'desc' }]}
          onSorting={(s) => set({ sort: s[0]?.id, dir: s[0]?.desc ? 'desc' : 'asc', page: undefined })}
          empty={{ title: 'Nobody matches these filters.', hint: 'Clear the search or invite someone.' }}
          rowTestId="user-row"
        />
      </div>
    </>
  );
}
