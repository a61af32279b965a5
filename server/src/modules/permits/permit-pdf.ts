import PDFDocument from 'pdfkit';
import QRCode from 'qrcode';
import { GASES, mudPlug, MUD_PLUG_CAUTION, type Gas, type GasBound, type GasUnit } from '@shared/calc';
import { permitStateLabels, workKindLabels } from '@shared/permit/states';
import { permitEventLabels, signedEvents, type PermitEvent } from '@shared/permit/state-machine';
import { auditActionLabel, gasUnitLabels, positionText, stateLabel, stepStatusLabels } from '@shared/permit/record-words';
import { roleLabels, type Role } from '@shared/abilities/roles';
import { conditionLabels, stepKindLabels, verificationLabels } from '@shared/schemas/isolation.schema';
import { gasTestPlaceLabels, gasTestPurposeLabels } from '@shared/schemas/gas-tests.schema';
import { checkKindLabels, fireWatchObservationLabels, plugFaceLabels } from '@shared/schemas/timed-checks.schema';
import { gaugeUnitLabels } from '@shared/calc/pressure';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import type { PermitDetail } from '@shared/types/permits';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { fontRuns, selectFont, type FontWeight } from './pdf-fonts';
import { loadPrintRecord, type PrintRecord } from './permit-print-record';
import { checkpointPrintBlock, drawCheckpoint, type CheckpointPrint } from '../audit/checkpoint-print';

type TextOptions = PDFKit.Mixins.TextOptions & { x?: number; y?: number };

export const MARGIN = 40;
/** Room kept free at the foot of each page for the permit number, page count and audit position. */
const FOOTER = 34;

/** Writes text in Noto Sans, switching between the font's parts within one line where the text needs it. */
export function write(doc: PDFKit.PDFDocument, value: unknown, options: TextOptions = {}, weight: FontWeight = 400) {
  const { x, y, continued, ...rest } = options;
  // Empty text would leave a continued line open, so the next text would run on after it.
  const runs = fontRuns(value, weight);
  if (!runs.length) runs.push(...fontRuns(' ', weight));
  runs.forEach((run, i) => {
    const more = i < runs.length - 1 || Boolean(continued);
    selectFont(doc, run);
    if (i === 0 && x !== undefined) doc.text(run.text, x, y, { ...rest, continued: more });
    else doc.text(run.text, i === 0 ? { ...rest, continued: more } : { continued: more });
  });
  return doc;
}

export const readingKeys: Record<Gas, string> = { o2: 'o2Pct', lel: 'lelPct', h2s: 'h2sPpm', co: 'coPpm' };
export const gasNames: Record<Gas, string> = { o2: 'O2', lel: 'Flammable', h2s: 'H2S', co: 'CO' };
export const defaultUnits: Record<Gas, GasUnit> = { o2: '%vol', lel: '%LEL', h2s: 'ppm', co: 'ppm' };
const handoverStatusLabels: Record<string, string> = { pending: 'waiting for the incoming lead', accepted: 'accepted', superseded: 'replaced by a later handover' };

export function boundText(b: GasBound): string {
  const u = gasUnitLabels[b.unit] ?? b.unit;
  if (b.min !== undefined && b.max !== undefined) return `${b.min} to ${b.max} ${u}`;
  if (b.max !== undefined) return `at most ${b.max} ${u}`;
  return `at least ${b.min} ${u}`;
}

/**
 * The printable permit, posted at the work site: the whole record, every page carrying the permit
 * number, its page count and the audit chain position. The record is read in one transaction first,
 * so a failure there is answered as an error before any byte is sent; the returned writer then lays
 * the document straight into `out` (pdfkit holds the pages until the end only so each can say
 * "page n of m") and resolves when `out` has taken the last byte.
 */
export async function preparePermitPdf(deps: AppDeps, tenantId: string, p: PermitDetail<Date>): Promise<(out: NodeJS.WritableStream) => Promise<void>> {
  const record = await withTenant(deps.sequelize, tenantId, () => loadPrintRecord(deps, tenantId, p.id));
  const url = `${deps.config.PUBLIC_URL}/permits/${p.id}`;
  const qr = await QRCode.toBuffer(url, { errorCorrectionLevel: 'M', margin: 1, width: 180 });
  // Every printed copy carries the audit trail's head signed at printing (issue 21).
  const checkpoint = await checkpointPrintBlock(deps, tenantId);
  return (out) => writePermitPdf(deps, p, record, url, qr, out, checkpoint);
}

async function writePermitPdf(deps: AppDeps, p: PermitDetail<Date>, record: PrintRecord, url: string, qr: Buffer, out: NodeJS.WritableStream, checkpoint: CheckpointPrint) {
  const doc = new PDFDocument({
    size: 'A4', bufferPages: true, margins: { top: MARGIN, left: MARGIN, right: MARGIN, bottom: MARGIN + FOOTER },
    info: { Title: `Permit to work ${p.number}`, Author: 'Holdpoint', Subject: p.title },
  });
  const finished = new Promise<void>((resolve, reject) => {
    out.on('finish', resolve);
    // A reader who goes away mid-download closes the answer without finishing it: nothing is left waiting.
    out.on('close', resolve);
    out.on('error', reject);
    doc.on('error', reject);
  });
  doc.pipe(out);
  drawPermit(doc, deps, p, record, url, qr);
  drawCheckpoint(doc, checkpoint, MARGIN);
  stampPages(doc, p.number, record.chain);
  doc.end();
  await finished;
}

/** The permit's whole record, drawn into `doc` from where it stands; the dossier draws it first and adds its own parts. */
export function drawPermit(doc: PDFKit.PDFDocument, deps: AppDeps, p: PermitDetail<Date>, record: PrintRecord, url: string, qr: Buffer) {
  const { settings, steps, provings, gas, checks, handovers } = record;
  // Times on the posted copy are the tenant's local times, with the zone named.
  const { timeZone } = settings;
  const unit: LocationUnit = settings.locationUnit;
  const when = (d: unknown) => (d ? formatInZone(d as string | Date, timeZone) : '-');
  const at = (v: number | null) => (v === null || v === undefined ? 'no position' : positionText(v, unit));
  const width = doc.page.width - 2 * MARGIN;

  const text = (v: unknown, options: TextOptions = {}) => write(doc, v, { width, ...options });
  const small = (v: unknown) => {
    doc.fontSize(8.5);
    text(v);
    doc.fontSize(9.5);
  };
  const heading = (t: string) => {
    doc.moveDown(0.6).fontSize(12).fillColor('#10252f');
    write(doc, t, { width }, 700).moveDown(0.2);
    doc.fontSize(9.5).fillColor('#14202b');
  };
  const row = (k: string, v: unknown) => {
    write(doc, `${k}: `, { continued: true, width }, 700);
    write(doc, v);
  };

  doc.image(qr, doc.page.width - MARGIN - 90, MARGIN, { width: 90 });
  doc.fontSize(18).fillColor('#10252f');
  write(doc, 'PERMIT TO WORK', { x: MARGIN, y: MARGIN }, 700);
  doc.fontSize(14);
  write(doc, `${p.number}  -  ${permitStateLabels[p.state]}`, {}, 700);
  doc.fontSize(10).fillColor('#14202b');
  write(doc, p.title, { width: 400 });
  doc.fontSize(8).fillColor('#3d4b57');
  write(doc, `Scan for the live record: ${url}`, { width: 400 });
  doc.moveDown(0.5);
  doc.rect(MARGIN, doc.y, width, 34).fill('#fff6cc');
  doc.fillColor('#14202b').fontSize(8.5);
  write(doc, `Caution: Holdpoint records and checks the permit and isolation process. It does not replace the operator's procedures, local codes, or a competent person's judgement. This copy was printed ${when(deps.clock.now())}; the live record is the authority.`, { x: MARGIN + 6, y: doc.y + 5, width: width - 12 });
  doc.moveDown(1.2);
  doc.x = MARGIN;
  doc.fontSize(9.5);

  heading('Job');
  row('Kinds of work', p.kinds.map((k) => workKindLabels[k]).join(', '));
  row('Pipeline', `${p.pipelineName}, from ${at(p.fromPosition)} to ${at(p.toPosition)}`);
  row('Job reference', p.jobReference ?? '-');
  row('Contractor', `${p.contractorName}; lead ${p.contractorLeadName ?? 'not named yet'}`);
  row('Requested by', p.requesterName);
  row('Authoriser', p.authoriserName ?? 'not approved yet');
  row('Current holder', p.holderName ?? 'nobody holds the permit now');
  row('Valid', `${when(p.validFrom)} to ${when(p.validTo)}`);
  if (p.kinds.includes('hot_work')) {
    row('Fire watch', `${p.fireWatchMinutes} minutes after hot work stops${p.fireWatchPerson ? `; ${p.fireWatchPerson}` : ''}`);
    if (p.hotWorkEndedAt) row('Hot work stopped', when(p.hotWorkEndedAt));
  }
  row('Gas tests', `within ${p.gasTestWindowMinutes} min before work starts, then every ${p.gasTestIntervalMinutes} min`);
  if (p.controlRoomAckAt) row('Control room acknowledged return to service', when(p.controlRoomAckAt));
  if (p.rejectionReason) row('Sent back because', p.rejectionReason);

  heading('Scope and method');
  text(p.scope || '-');
  if (p.methodStatement) {
    doc.moveDown(0.3);
    text(p.methodStatement);
  }
  heading('Hazards and precautions');
  text(p.hazards || '-');
  for (const c of p.checklist) text(`[${c.confirmed ? 'x' : ' '}] ${c.label}${c.required ? ' (required)' : ''}${c.confirmedByName ? ` - ${c.confirmedByName}${c.confirmedAt ? `, ${when(c.confirmedAt)}` : ''}` : ''}`);
  row('PPE', p.ppe.join(', ') || '-');
  if (p.walkdown.length) {
    heading('Walk-down before return to service');
    for (const c of p.walkdown) text(`[${c.confirmed ? 'x' : ' '}] ${c.label}${c.required ? ' (required)' : ''}${c.confirmedByName ? ` - ${c.confirmedByName}${c.confirmedAt ? `, ${when(c.confirmedAt)}` : ''}` : ''}`);
  }

  heading('Isolations');
  if (!steps.length) text('No steps yet.');
  for (const s of steps) {
    const status = stepStatusLabels[s.status] ?? s.status.replace(/_/g, ' ');
    write(doc, `${s.seq}. ${s.label} at ${at(s.position)} - ${stepKindLabels[s.kind] ?? s.kind}, ${(conditionLabels[s.condition] ?? s.condition).toLowerCase()}: ${status}`, { width }, 700);
    const facts: string[] = [];
    if (s.lock_number) facts.push(`lock ${s.lock_number}`);
    if (s.tag_number) facts.push(`tag ${s.tag_number}`);
    if (s.applied_by) facts.push(`applied by ${s.applied_by}, ${when(s.applied_at)}`);
    if (s.verified_by) {
      const method = s.verification_method ? verificationLabels[s.verification_method] ?? s.verification_method : 'verified';
      const reading = s.verification_reading !== null ? ` (${s.verification_reading} ${s.verification_unit ?? ''})`.replace(' )', ')') : '';
      facts.push(`verified by ${s.verified_by}, ${when(s.verified_at)}: ${method.toLowerCase()}${reading}`);
    }
    if (s.removed_by) facts.push(`removed by ${s.removed_by}, ${when(s.removed_at)}${s.removal_note ? ` (${s.removal_note})` : ''}`);
    if (facts.length) small(`   ${facts.join('; ')}`);
    if (s.kind === 'plug' && s.plug_diameter_in) {
      const m = mudPlug({ diameterIn: s.plug_diameter_in });
      small(`   Plug for ${s.plug_diameter_in} in: about ${m.mudLb.toFixed(1)} lb of paste (${m.mudLbRange[0].toFixed(1)} to ${m.mudLbRange[1].toFixed(1)}), ${m.bentoniteLb.toFixed(1)} lb bentonite, ${m.waterGal.toFixed(2)} US gal water, ${m.plugLengthIn.toFixed(1)} in long${m.mudBalls ? `, about ${m.mudBalls} balls` : ''}.`);
    }
    const built = s.plug_as_built;
    if (built) small(`   As built${built.builtAt ? ` ${when(built.builtAt)}` : ''}: ${built.bentoniteLb ?? '-'} lb bentonite, ${built.waterLb ?? '-'} lb water, ${built.lengthIn ?? '-'} in long.`);
    for (const w of s.plug_warnings ?? []) small(`   Warning: ${w.message}${s.plug_warnings_ack_by ? ` (acknowledged by ${s.plug_warnings_ack_by})` : ' (not acknowledged)'}`);
    if (s.line_stop_as_built) {
      const ls = s.line_stop_as_built as { setAt?: string; [k: string]: unknown };
      const parts = Object.entries(ls).filter(([k, v]) => k !== 'setAt' && (typeof v === 'number' || typeof v === 'string') && !/^\d{4}-\d{2}-\d{2}T/.test(String(v)));
      small(`   Line stop set${ls.setAt ? ` ${when(ls.setAt)}` : ''}${parts.length ? `: ${parts.map(([k, v]) => `${k.replace(/([A-Z])/g, ' $1').toLowerCase()} ${v}`).join(', ')}` : ''}.`);
    }
  }
  if (steps.some((s) => s.kind === 'plug')) {
    doc.fontSize(8).fillColor('#b3261e');
    text(MUD_PLUG_CAUTION);
    doc.fillColor('#14202b').fontSize(9.5);
  }

  heading('Proving the section dead');
  if (!provings.length) text('No hold test recorded.');
  for (const x of provings) {
    const u = gaugeUnitLabels[x.unit] ?? x.unit;
    const result = x.result === 'proved' ? 'proved dead' : x.result === 'failed' ? `failed${x.failure ? `: ${x.failure}` : ''}` : 'still running';
    text(`At ${x.label}: ${x.start_reading} ${u} at ${when(x.started_at)} (${x.started_by})${x.ended_at ? `, ${x.end_reading} ${u} at ${when(x.ended_at)} (${x.ended_by})` : ''}; held ${x.hold_minutes} min, at most ${x.max_pressure} ${gaugeUnitLabels[x.max_pressure_unit] ?? x.max_pressure_unit} allowed: ${result}.${x.notes ? ` ${x.notes}` : ''}`);
  }

  heading('Gas tests');
  if (!gas.length) text('None recorded.');
  const limits = new Map<string, string>();
  for (const g of gas) {
    const values = GASES.map((key) => {
      const res = g.assessment?.gases?.[key];
      const u = gasUnitLabels[res?.limit?.unit ?? defaultUnits[key]];
      if (res?.limit) limits.set(`${key}|${boundText(res.limit)}|${res.source}`, `${gasNames[key]}: ${boundText(res.limit)} - ${res.source}`);
      const v = g.readings?.[readingKeys[key]];
      return `${gasNames[key]} ${v === null || v === undefined ? 'not measured' : `${v} ${u}`}`;
    });
    const place = g.place === 'other' && g.place_note ? g.place_note : gasTestPlaceLabels[g.place] ?? g.place.replace(/_/g, ' ');
    const purpose = g.purpose ? ` (${(gasTestPurposeLabels[g.purpose] ?? g.purpose).toLowerCase()})` : '';
    small(`${when(g.tested_at)}, ${place}${purpose}: ${g.verdict === 'pass' ? 'PASS' : 'FAIL'} - ${values.join(', ')}; by ${g.tester}${g.entered_late ? ', entered late' : ''}${g.notes ? `. ${g.notes}` : ''}`);
  }
  if (limits.size) {
    doc.moveDown(0.3);
    write(doc, 'Limits applied, and where each comes from', { width }, 700);
    for (const line of limits.values()) small(line);
  }

  if (checks.length) {
    heading('Checks');
    for (const c of checks) {
      const o = c.observation as { face?: keyof typeof plugFaceLabels; observation?: keyof typeof fireWatchObservationLabels; vapourAwayFromWork?: boolean; pressureBuilding?: boolean };
      const seen = [
        o.face ? plugFaceLabels[o.face] : null,
        o.observation ? fireWatchObservationLabels[o.observation] : null,
        o.vapourAwayFromWork === undefined ? null : o.vapourAwayFromWork ? 'vapour away from the work' : 'vapour toward the work',
        o.pressureBuilding === undefined ? null : o.pressureBuilding ? 'pressure building' : 'no pressure building',
      ].filter(Boolean);
      small(`${when(c.checked_at)} ${checkKindLabels[c.kind] ?? c.kind}${c.label ? ` at ${c.label}` : ''}: ${c.ok ? 'all right' : 'problem found'}${seen.length ? ` (${seen.join(', ')})` : ''}; by ${c.recorded_by}${c.action_taken ? `. Action: ${c.action_taken}` : ''}${c.notes ? `. ${c.notes}` : ''}`);
    }
  }

  heading('Signatures');
  const signed = p.signatures;
  for (const ev of signedEvents) if (!signed.some((s) => s.event === ev)) text(`${permitEventLabels[ev]}: ________________________`);
  for (const s of signed) text(`${permitEventLabels[s.event as PermitEvent] ?? auditActionLabel(s.event)}: ${s.signedName}, ${when(s.signedAt)}${s.passwordConfirmed ? ' (password re-entered)' : ''}`);

  heading('Handovers');
  if (!handovers.length) text('No handover: the permit has stayed with its first holder.');
  for (const h of handovers)
    text(`${when(h.from_signed_at)} ${h.from_name} (signed "${h.from_signed_name}") to ${h.to_name}: ${handoverStatusLabels[h.status] ?? h.status}${h.accepted_at ? `, signed "${h.to_signed_name}" ${when(h.accepted_at)}` : ''}. Open points: ${h.open_points || 'none'}`);
  row('Current holder', p.holderName ?? 'nobody holds the permit now');

  heading(`Record: all ${p.timeline.length} entries of the audit trail`);
  doc.fontSize(8.5);
  for (const e of p.timeline) {
    // Other records (an isolation certificate) have states of their own: only the permit's are named here.
    const change = e.entityType === 'permit' && e.fromState && e.toState && e.fromState !== e.toState ? ` (${stateLabel(e.fromState)} to ${stateLabel(e.toState)})` : '';
    const role = e.actorRole ? ` (${roleLabels[e.actorRole as Role] ?? e.actorRole.replace(/_/g, ' ')})` : '';
    const label = typeof e.data?.label === 'string' ? ` - ${e.data.label}` : '';
    text(`No. ${e.seq}  ${when(e.occurredAt)}  ${auditActionLabel(e.action)}${change}${label}  ${e.actorName ?? 'Holdpoint'}${role}${e.reason ? ` - ${e.reason}` : ''}`);
  }
  doc.fontSize(9.5);
}

/** Every page says whose it is, where it sits, and where the record stood in the audit chain. Call once, after the last page. */
export function stampPages(doc: PDFKit.PDFDocument, permitNumber: string, chain: PrintRecord['chain'], chainWords?: string) {
  const width = doc.page.width - 2 * MARGIN;
  const chainText = chainWords ?? (chain ? `audit trail up to entry no. ${chain.seq}, hash ${chain.hash.slice(0, 12)}` : 'no audit entries yet');
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const bottom = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    doc.fontSize(7.5).fillColor('#3d4b57');
    write(doc, `Permit ${permitNumber}  -  page ${i - range.start + 1} of ${range.count}  -  ${chainText}`, { x: MARGIN, y: doc.page.height - MARGIN - 12, width, lineBreak: false });
    doc.page.margins.bottom = bottom;
  }
  doc.flushPages();
}
