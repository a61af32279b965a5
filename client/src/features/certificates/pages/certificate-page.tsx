import { Link, useParams } from 'react-router-dom';
import { subject } from '@casl/ability';
import { formatPressure } from '@shared/calc/pressure';
import { isCertificateLive } from '@shared/isolations/certificate-states';
import { permitStateLabels } from '@shared/permit/states';
import { stepKindLabels, type StepKind } from '@shared/schemas/isolation.schema';
import { formatInZone } from '@shared/time/zone';
import type { CertificateActionState, IsolationCertificate } from '@shared/types/certificates';
import { useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { Card, Loading, PageHeader } from '@client/components/ui/page';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useCertificate } from '../api/get-certificate';
import { useReturnCertificate } from '../api/certificate-mutations';
import { CertificateStatusText } from '../components/certificate-status';
import { LongTermForm, RecheckForm } from '../components/certificate-forms';

const position = (n: number) => Number(n.toFixed(3)).toString();
const stepStatusWords: Record<string, string> = { planned: 'Not yet on', applied: 'On, not yet verified', verified: 'On and verified', removed: 'Taken off' };

/** Why an action the person's role allows cannot be taken now. */
function Blocked({ state }: { state: CertificateActionState }) {
  return state.allowed ? null : (
    <ul className="list-disc pl-5 text-sm text-ink-soft">
      {state.reasons.map((r) => (
        <li key={r}>{r}</li>
      ))}
    </ul>
  );
}

function Actions({ c }: { c: IsolationCertificate }) {
  const ability = useAbility();
  const toast = useToast();
  const giveBack = useReturnCertificate(c.id);
  const { data: me } = useMe();
  const may = (action: 'update' | 'record' | 'close') => ability.can(action, subject('IsolationCertificate', { tenantId: me?.activeTenantId ?? '' }));
  const limit = formatPressure(c.recheckLimit.maxPressure, c.recheckLimit.unit);
  const sections = [];
  if (may('record') && c.longTerm && isCertificateLive(c))
    sections.push(
      <Card key="recheck">
        <h2 className="mb-2 text-lg font-semibold">Re-check the isolation</h2>
        <p className="mb-3 text-sm text-ink-soft">Needs an in-date lockout qualification.</p>
        {c.actions.recordRecheck.allowed ? <RecheckForm id={c.id} limit={limit} /> : <Blocked state={c.actions.recordRecheck} />}
      </Card>,
    );
  if (may('update') && !c.longTerm && isCertificateLive(c))
    sections.push(
      <Card key="long-term">
        <h2 className="mb-2 text-lg font-semibold">Keep the isolation beyond its permits</h2>
        {c.actions.markLongTerm.allowed ? <LongTermForm id={c.id} /> : <Blocked state={c.actions.markLongTerm} />}
      </Card>,
    );
  if (may('close') && isCertificateLive(c))
    sections.push(
      <Card key="return">
        <h2 className="mb-2 text-lg font-semibold">Return the certificate</h2>
        {c.actions.return.allowed ? (
          <Button type="button" variant="danger" busy={giveBack.isPending} onClick={() => giveBack.mutate(undefined, { onSuccess: () => toast('success', `${c.number} returned.`), onError: (e) => toast('error', e.message) })}>
            Return {c.number}
          </Button>
        ) : (
          <Blocked state={c.actions.return} />
        )}
      </Card>,
    );
  return sections.length ? <div className="grid gap-4 md:grid-cols-2">{sections}</div> : null;
}

export default function CertificatePage() {
  const { id = '' } = useParams();
  const cert = useCertificate(id);
  const { data: me } = useMe();
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const unit = me?.activeTenant?.locationUnit ?? 'mi';
  if (cert.isPending) return <Loading />;
  if (cert.isError)
    return (
      <Notice tone="danger" role="alert">
        {cert.error.message}
      </Notice>
    );
  const c = cert.data;
  const when = (v: string | null) => (v ? formatInZone(v, timeZone) : '—');
  return (
    <>
      <PageHeader title={`Isolation certificate ${c.number}`} subtitle={`${c.pipelineName}, ${position(c.fromPosition)} to ${position(c.toPosition)} ${unit}`} />
      <div className="flex flex-col gap-4">
        <SafetyCaution>Work starts only under a live certificate. Never take off an isolation a permit still works under. </SafetyCaution>
        <CertificateStatusText c={c} timeZone={timeZone} />
        <Card>
          <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
            <dt className="text-ink-soft">Signed in place by</dt>
            <dd>
              {c.issuedSignedName}, {when(c.issuedAt)}
            </dd>
            {c.longTerm ? (
              <>
                <dt className="text-ink-soft">Long-term</dt>
                <dd className="break-words">
                  {c.longTermReason} ({c.longTermByName}, {when(c.longTermAt)}); re-checked every {c.recheckHours} hours, next due {when(c.nextRecheckDue)}
                </dd>
              </>
            ) : null}
            {c.returnedAt ? (
              <>
                <dt className="text-ink-soft">Returned</dt>
                <dd>
                  {when(c.returnedAt)}
                  {c.returnedByName ? ` by ${c.returnedByName}` : ''}
                </dd>
              </>
            ) : null}
          </dl>
        </Card>
        <Actions c={c} />
        <Card>
          <h2 className="mb-2 text-lg font-semibold">Isolations it covers</h2>
          <ul className="flex flex-col gap-2" aria-label="Isolations on the certificate">
            {c.steps.map((s) => (
              <li key={s.id} className="rounded-md border border-line p-2 text-sm" data-testid="certificate-step">
                <p className="font-semibold break-words">
                  {s.label} · {stepKindLabels[s.kind as StepKind] ?? 'Isolation'} at {position(s.position)} {unit}
                  {s.isolatingDevice ? ' · isolating device' : ''}
                </p>
                <p>
                  {stepStatusWords[s.status] ?? 'Unknown'}
                  {s.lockNumber ? ` · lock ${s.lockNumber}` : ''}
                  {s.tagNumber ? ` · tag ${s.tagNumber}` : ''}
                  {s.appliedByName ? ` · put on by ${s.appliedByName}, ${when(s.appliedAt)}` : ''}
                  {s.verifiedByName ? ` · verified by ${s.verifiedByName}` : ''}
                  {s.removedAt ? ` · taken off ${when(s.removedAt)}` : ''}
                </p>
              </li>
            ))}
          </ul>
        </Card>
        <Card>
          <h2 className="mb-2 text-lg font-semibold">Permits working under it</h2>
          <ul className="flex flex-col gap-2" aria-label="Permits on the certificate">
            {c.permits.map((p) => (
              <li key={p.permitId} className="text-sm">
                <Link to={`/permits/${p.permitId}`} className="inline-flex min-h-11 items-center font-semibold text-brand underline">
                  {p.number}
                </Link>{' '}
                {p.title} · {permitStateLabels[p.state]} · {p.issuedFor ? 'its isolations made this certificate' : 'relies on it'} · since {when(p.linkedAt)}
                {p.releasedAt ? ` · no longer relies on it since ${when(p.releasedAt)}` : ''}
              </li>
            ))}
          </ul>
        </Card>
        <Card>
          <h2 className="mb-2 text-lg font-semibold">Proved dead</h2>
          {c.proving ? (
            <p className="text-sm">
              Held at {c.proving.at} for {c.proving.holdMinutes} minutes: {formatPressure(c.proving.startReading, c.proving.unit)} at the start
              {c.proving.endReading !== null ? `, ${formatPressure(c.proving.endReading, c.proving.unit)} at the end` : ''}
              {c.proving.endedByName ? `, read by ${c.proving.endedByName}` : ''}, {when(c.proving.endedAt)}.
            </p>
          ) : (
            <p className="text-sm">No hold test is recorded with this certificate.</p>
          )}
        </Card>
        {c.longTerm ? (
          <Card>
            <h2 className="mb-2 text-lg font-semibold">Re-checks</h2>
            {c.rechecks.length ? (
              <ul className="flex flex-col gap-2" aria-label="Re-checks">
                {c.rechecks.map((r) => (
                  <li key={r.id} className={`rounded-md border-l-4 p-2 text-sm ${r.result === 'fail' ? 'border-danger bg-danger-soft' : 'border-safe'}`}>
                    <p className="font-semibold">
                      {r.result === 'pass' ? 'Passed' : 'Failed'} · {when(r.checkedAt)} · {r.checkedByName}
                    </p>
                    <p>
                      Gauge {formatPressure(r.gaugeReading, r.gaugeUnit)} (limit {formatPressure(r.maxPressure, r.maxPressureUnit)}){r.failure ? `: ${r.failure}` : ''}
                      {r.notes ? ` · ${r.notes}` : ''}
                    </p>
                  </li>
                ))}
              </ul>
            ) : (
              <p className="text-sm">No re-check recorded yet; the first is due {when(c.nextRecheckDue)}.</p>
            )}
          </Card>
        ) : null}
      </div>
    </>
  );
}
