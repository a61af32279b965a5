import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { format, parseISO } from 'date-fns';
import { qualificationInputSchema, type QualificationInput } from '@shared/schemas/auth.schema';
import { qualificationKinds, qualificationLabels, type QualificationKind } from '@shared/abilities/roles';
import { daysBetween, siteDay } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Can } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Card, EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useCreateQualification, useQualifications, useUsers } from '../api/admin-queries';

/** Expired → danger, expiring within 30 days → caution (ISO 3864 colour meanings). `today` is the site day. */
export function expiryStatus(expiresOn: string, today: string) {
  const days = daysBetween(today, expiresOn);
  if (days < 0) return { tone: 'bg-danger-soft text-danger', label: `Expired ${-days} day${days === -1 ? '' : 's'} ago` };
  if (days <= 30) return { tone: 'bg-caution-soft text-ink', label: `Expires in ${days} day${days === 1 ? '' : 's'}` };
  return { tone: '', label: `Valid, ${days} days left` };
}

function AddQualification() {
  const people = useUsers({ pageSize: 200 });
  const create = useCreateQualification();
  const toast = useToast();
  const form = useForm<QualificationInput>({ resolver: zodResolver(qualificationInputSchema), defaultValues: { userId: '', kind: 'gas_tester', issuedOn: '', expiresOn: '' } });
  const uniquePeople = [...new Map((people.data?.items ?? []).map((p) => [p.userId, p])).values()];
  return (
    <Card>
      <h2 className="mb-3 text-lg font-semibold">Record a qualification</h2>
      <form
        noValidate
        className="grid gap-3 md:grid-cols-5 md:items-end"
        onSubmit={form.handleSubmit((v) =>
          create.mutate(v, {
            onSuccess: () => {
              toast('success', 'Qualification recorded.');
              form.reset();
            },
            onError: (e) => e instanceof ApiError && e.details.forEach((d) => form.setError(d.path as keyof QualificationInput, { message: d.message })),
          }),
        )}
      >
        <SelectField label="Person" {...form.register('userId')} error={form.formState.errors.userId && !form.getValues('userId') ? 'Choose a person.' : form.formState.errors.userId?.message}>
          <option value="">Choose…</option>
          {uniquePeople.map((p) => (
            <option key={p.userId} value={p.userId}>
              {p.name}
            </option>
          ))}
        </SelectField>
        <SelectField label="Qualification" {...form.register('kind')}>
          {qualificationKinds.map((k) => (
            <option key={k} value={k}>
              {qualificationLabels[k]}
            </option>
          ))}
        </SelectField>
        <TextField label="Issued" type="date" {...form.register('issuedOn')} error={form.formState.errors.issuedOn?.message} />
        <TextField label="Expires" type="date" {...form.register('expiresOn')} error={form.formState.errors.expiresOn?.message} />
        <Button type="submit" busy={create.isPending}>
          Save
        </Button>
      </form>
    </Card>
  );
}

export default function QualificationsPage() {
  const [page, setPage] = useState(1);
  const q = useQualifications(page);
  const { data: me } = useMe();
  // In date or not is judged on the site's calendar day, not the browser's.
  const today = siteDay(new Date(), me?.activeTenant?.timeZone ?? 'UTC');
  return (
    <>
      <PageHeader title="Qualifications" subtitle="Who may sign which step, and until when. Expired and soon-expiring ones are highlighted." />
      <div className="flex flex-col gap-4">
        <Can I="create" a="Qualification">
          <AddQualification />
        </Can>
        {q.isPending ? (
          <Loading />
        ) : !q.data?.items.length ? (
          <EmptyState title="No qualifications recorded yet." />
        ) : (
          <div className="overflow-x-auto rounded-card border border-line bg-surface">
            <table className="w-full text-left text-sm">
              <caption className="sr-only">Qualifications</caption>
              <thead className="bg-brand-soft">
                <tr>
                  <th scope="col" className="px-3 py-2">Person</th>
                  <th scope="col" className="px-3 py-2">Qualification</th>
                  <th scope="col" className="px-3 py-2">Reference</th>
                  <th scope="col" className="px-3 py-2">Issued</th>
                  <th scope="col" className="px-3 py-2">Expires</th>
                  <th scope="col" className="px-3 py-2">Status</th>
                </tr>
              </thead>
              <tbody>
                {q.data.items.map((row) => {
                  const s = expiryStatus(row.expiresOn, today);
                  return (
                    <tr key={row.id} className={`border-t border-line ${s.tone}`} data-testid="qualification-row">
                      <td className="px-3 py-2">{row.userName}</td>
                      <td className="px-3 py-2">{qualificationLabels[row.kind as QualificationKind] ?? row.kind}</td>
                      <td className="px-3 py-2">{row.reference}</td>
                      <td className="px-3 py-2">{format(parseISO(row.issuedOn), 'd MMM yyyy')}</td>
                      <td className="px-3 py-2">{format(parseISO(row.expiresOn), 'd MMM yyyy')}</td>
                      <td className="px-3 py-2 font-medium">{s.label}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <div className="flex gap-2 p-2">
              <Button variant="secondary" disabled={page <= 1} onClick={() => setPage(page - 1)}>
                Previous
              </Button>
              <Button variant="secondary" disabled={page * q.data.pageSize >= q.data.total} onClick={() => setPage(page + 1)}>
                Next
              </Button>
            </div>
          </div>
        )}
      </div>
    </>
  );
}
