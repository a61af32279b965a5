import { Link } from 'react-router-dom';
import { certificatesQuerySchema } from '@shared/schemas/certificates.schema';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { SelectField } from '@client/components/ui/field';
import { EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useCertificates } from '../api/get-certificates';
import { CertificateStatusText } from '../components/certificate-status';

const position = (n: number) => Number(n.toFixed(3)).toString();

export default function CertificatesPage() {
  const { query, set } = useListQuery(certificatesQuerySchema);
  const list = useCertificates(query);
  const { data: me } = useMe();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const unit = me?.activeTenant?.locationUnit ?? 'mi';
  const pages = list.data ? Math.max(1, Math.ceil(list.data.total / list.data.pageSize)) : 1;
  return (
    <>
      <PageHeader title="Isolation certificates" subtitle="Each isolated section of a line, the permits that work under it, and long-term isolations with their re-checks." />
      <div className="flex flex-col gap-4">
        <SafetyCaution>Work starts only under a live certificate. A long-term isolation stays in place between permits: keep its re-checks in date. </SafetyCaution>
        <div className="grid gap-3 sm:grid-cols-2">
          <SelectField label="Certificates" value={query.state ?? ''} onChange={(e) => set({ state: e.target.value || undefined, page: undefined })}>
            <option value="">Live and returned</option>
            <option value="live">Live only</option>
            <option value="returned">Returned only</option>
          </SelectField>
          <SelectField label="Kind of isolation" value={query.longTerm ?? ''} onChange={(e) => set({ longTerm: e.target.value || undefined, page: undefined })}>
            <option value="">All</option>
            <option value="true">Long-term only</option>
            <option value="false">For a permit only</option>
          </SelectField>
        </div>
        {list.isPending ? (
          <Loading />
        ) : list.isError ? (
          <Notice tone="danger" role="alert">
            {list.error.message}
          </Notice>
        ) : !list.data.items.length ? (
          <EmptyState title="No isolation certificate matches." />
        ) : (
          <ul className="grid gap-3 md:grid-cols-2" aria-label="Isolation certificates">
            {list.data.items.map((c) => (
              <li key={c.id} className="flex min-w-0 flex-col gap-2 rounded-card border border-line bg-surface p-3" data-testid="certificate-row">
                <Link to={`/certificates/${c.id}`} className="inline-flex min-h-11 items-center text-lg font-semibold text-brand underline break-words">
                  {c.number}
                </Link>
                <p className="break-words">
                  {c.pipelineName}, {position(c.fromPosition)} to {position(c.toPosition)} {unit}
                </p>
                <p className="text-sm text-ink-soft">
                  {c.devicesInPlace} isolating device(s) in place · {c.permitsRelying} permit(s) working under it
                </p>
                <CertificateStatusText c={c} timeZone={timeZone} />
              </li>
            ))}
          </ul>
        )}
        {pages > 1 ? (
          <nav className="flex items-center justify-between gap-2" aria-label="Pages">
            <Button type="button" variant="secondary" disabled={query.page <= 1} onClick={() => set({ page: String(query.page - 1) })}>
              Previous
            </Button>
            <span>
              Page {query.page} of {pages}
            </span>
            <Button type="button" variant="secondary" disabled={query.page >= pages} onClick={() => set({ page: String(query.page + 1) })}>
              Next
            </Button>
          </nav>
        ) : null}
      </div>
    </>
  );
}
