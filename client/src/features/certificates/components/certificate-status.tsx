import { formatInZone } from '@shared/time/zone';
import { certificateStateLabels, isCertificateLive } from '@shared/isolations/certificate-states';
import type { IsolationCertificateSummary } from '@shared/types/certificates';

type Tone = 'danger' | 'caution' | 'neutral';

/** Where the certificate stands, in words, with the colour meaning of ISO 3864 (red: act now; yellow: isolation in place). */
export function certificateStatus(c: IsolationCertificateSummary, timeZone: string): { tone: Tone; text: string } {
  if (!isCertificateLive(c)) return { tone: 'neutral', text: `${certificateStateLabels[c.state]}${c.returnedAt ? ` ${formatInZone(c.returnedAt, timeZone)}` : ''}` };
  if (c.problem) return { tone: 'danger', text: `Failed re-check: ${c.problem}. Nobody works under it until a passing re-check.` };
  if (c.longTerm && c.recheckOverdue) return { tone: 'danger', text: `Long-term isolation: re-check overdue since ${formatInZone(c.nextRecheckDue, timeZone)}.` };
  if (c.longTerm) return { tone: 'caution', text: `Long-term isolation: next re-check due ${formatInZone(c.nextRecheckDue, timeZone)}.` };
  return { tone: 'caution', text: 'Live: its isolations are in place.' };
}

const toneClass: Record<Tone, string> = { danger: 'border-danger bg-danger-soft', caution: 'border-caution bg-caution-soft', neutral: 'border-line bg-surface' };

export function CertificateStatusText({ c, timeZone }: { c: IsolationCertificateSummary; timeZone: string }) {
  const s = certificateStatus(c, timeZone);
  return (
    <p className={`rounded-md border-l-4 px-3 py-2 text-sm ${toneClass[s.tone]} ${s.tone === 'danger' ? 'font-semibold' : ''}`} data-testid="certificate-status">
      {s.text}
    </p>
  );
}
