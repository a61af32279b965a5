import { permitEventLabels } from '@shared/permit/state-machine';
import { formatInZone } from '@shared/time/zone';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';

export function SignaturesSection({ permit, timeZone }: { permit: PermitDetail; timeZone: string }) {
  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Signatures</h2>
      {permit.signatures.length ? (
        <ul className="flex flex-col gap-2 text-sm">
          {permit.signatures.map((s) => (
            <li key={`${s.event}-${s.signedAt}`} className="border-b border-line pb-2 last:border-0" data-testid="signature">
              <p className="font-semibold">{permitEventLabels[s.event] ?? s.event}</p>
              <p className="break-words">
                {s.signedName} · {formatInZone(s.signedAt, timeZone)}
                {s.passwordConfirmed ? ' · password re-entered' : ''}
              </p>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-soft">No signatures yet. Approval, acceptance, hand-back and return to service are signed.</p>
      )}
    </Card>
  );
}
