import PDFDocument from 'pdfkit';
import QRCode from 'qrcode';
import { QueryTypes } from 'sequelize';
import { mudPlug, MUD_PLUG_CAUTION } from '@shared/calc';
import { permitStateLabels, workKindLabels } from '@shared/permit/states';
import { permitEventLabels, signedEvents, type PermitEvent } from '@shared/permit/state-machine';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import type { PermitRow } from './permits.repository';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { withTenant } from '../../db/sequelize';
import { fontRuns, selectFont, type FontWeight } from './pdf-fonts';

interface PdfInput extends PermitRow {
  signatures: unknown[];
  timeline: unknown[];
  nextGasTestDue: string | null;
}

type TextOptions = PDFKit.Mixins.TextOptions & { x?: number; y?: number };

/** Writes text in Noto Sans, switching between the font's parts within one line where the text needs it. */
function write(doc: PDFKit.PDFDocument, value: unknown, options: TextOptions = {}, weight: FontWeight = 400) {
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

/** The printable permit, posted at the work site; the QR code opens the live record. */
export async function renderPermitPdf(deps: AppDeps, tenantId: string, p: PdfInput): Promise<Buffer> {
  return withTenant(deps.sequelize, tenantId, () => renderInTenant(deps, tenantId, p));
}

async function renderInTenant(deps: AppDeps, tenantId: string, p: PdfInput): Promise<Buffer> {
  // Times on the posted copy are the tenant's local times, with the zone named.
  const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
  const when = (d: unknown) => (d ? formatInZone(d as string | Date, timeZone) : '-');
  const steps = await deps.sequelize.query<{
    seq: number; kind: string; condition: string; status: string; label: string; position: number; lock_number: string | null; tag_number: string | null;
    applied_by: string | null; verified_by: string | null; removed_at: Date | null; plug_diameter_in: number | null;
  }>(
    `SELECT s.seq, s.kind, s.condition, s.status, coalesce(ip.tag_code, s.temp_label) AS label, coalesce(ip.position, s.temp_position)::float8 AS position,
            l.number AS lock_number, t.number AS tag_number, ua.name AS applied_by, uv.name AS verified_by, s.removed_at, s.plug_diameter_in::float8 AS plug_diameter_in
     FROM isolation_steps s
     LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     LEFT JOIN locks l ON l.tenant_id = s.tenant_id AND l.id = s.lock_id
     LEFT JOIN tags t ON t.tenant_id = s.tenant_id AND t.id = s.tag_id
     LEFT JOIN users ua ON ua.id = s.applied_by LEFT JOIN users uv ON uv.id = s.verified_by
     WHERE s.tenant_id = :tenantId AND s.permit_id = :id ORDER BY s.seq`,
    { replacements: { tenantId, id: p.id }, type: QueryTypes.SELECT },
  );
  const gas = await deps.sequelize.query<{ tested_at: Date; place: string; verdict: string; readings: Record<string, number> }>(
    `SELECT tested_at, place, verdict, readings FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :id ORDER BY tested_at DESC LIMIT 6`,
    { replacements: { tenantId, id: p.id }, type: QueryTypes.SELECT },
  );
  const url = `${deps.config.PUBLIC_URL}/permits/${p.id}`;
  const qr = await QRCode.toBuffer(url, { errorCorrectionLevel: 'M', margin: 1, width: 180 });

  const doc = new PDFDocument({ size: 'A4', margin: 40, info: { Title: `Permit to work ${p.number}`, Author: 'Holdpoint', Subject: p.title } });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve) => doc.on('end', () => resolve(Buffer.concat(chunks))));

  const text = (v: unknown, options: TextOptions = {}) => write(doc, v, options);
  const heading = (t: string) => {
    doc.moveDown(0.6).fontSize(12).fillColor('#10252f');
    write(doc, t, {}, 700).moveDown(0.2);
    doc.fontSize(9.5).fillColor('#14202b');
  };
  const row = (k: string, v: unknown) => {
    write(doc, `${k}: `, { continued: true }, 700);
    write(doc, v);
  };

  doc.image(qr, doc.page.width - 40 - 90, 40, { width: 90 });
  doc.fontSize(18).fillColor('#10252f');
  write(doc, 'PERMIT TO WORK', { x: 40, y: 40 }, 700);
  doc.fontSize(14);
  write(doc, `${p.number}  -  ${permitStateLabels[p.state]}`, {}, 700);
  doc.fontSize(10).fillColor('#14202b');
  text(p.title, { width: 400 });
  doc.fontSize(8).fillColor('#3d4b57');
  text(`Scan for the live record: ${url}`, { width: 400 });
  doc.moveDown(0.5);
  doc.rect(40, doc.y, doc.page.width - 80, 34).fill('#fff6cc');
  doc.fillColor('#14202b').fontSize(8.5);
  text(`Caution: Holdpoint records and checks the permit and isolation process. It does not replace the operator's procedures, local codes, or a competent person's judgement. This copy was printed ${when(deps.clock.now())}; the live record is the authority.`, { x: 46, y: doc.y + 5, width: doc.page.width - 92 });
  doc.moveDown(1.2);
  doc.x = 40;

  heading('Job');
  row('Kinds of work', p.kinds.map((k) => workKindLabels[k]).join(', '));
  row('Pipeline', `${p.pipelineName}, from ${p.fromPosition} to ${p.toPosition}`);
  row('Job reference', p.jobReference ?? '-');
  row('Contractor', `${p.contractorName}; lead ${p.contractorLeadName ?? 'not named yet'}`);
  row('Requested by', p.requesterName);
  row('Valid', `${when(p.validFrom)} to ${when(p.validTo)}`);
  if (p.kinds.includes('hot_work')) row('Fire watch', `${p.fireWatchMinutes} minutes after hot work stops${p.fireWatchPerson ? `; ${p.fireWatchPerson}` : ''}`);
  row('Gas tests', `within ${p.gasTestWindowMinutes} min before work starts, then every ${p.gasTestIntervalMinutes} min`);
  heading('Scope and method');
  text(p.scope || '-');
  if (p.methodStatement) {
    doc.moveDown(0.3);
    text(p.methodStatement);
  }
  heading('Hazards and precautions');
  text(p.hazards || '-');
  for (const c of p.checklist) text(`[${c.confirmed ? 'x' : ' '}] ${c.label}${c.required ? ' (required)' : ''}${c.confirmedByName ? ` - ${c.confirmedByName}` : ''}`);
  row('PPE', p.ppe.join(', ') || '-');

  heading('Isolation plan');
  if (!steps.length) text('No steps yet.');
  for (const s of steps) {
    let line = `${s.seq}. ${s.label} at ${s.position} - ${s.kind.replace(/_/g, ' ')}, ${s.condition.replace(/_/g, ' ')}; ${s.status}`;
    if (s.lock_number) line += `; lock ${s.lock_number}`;
    if (s.tag_number) line += `; tag ${s.tag_number}`;
    if (s.applied_by) line += `; applied by ${s.applied_by}`;
    if (s.verified_by) line += `; verified by ${s.verified_by}`;
    text(line);
    if (s.kind === 'plug' && s.plug_diameter_in) {
      const m = mudPlug({ diameterIn: s.plug_diameter_in });
      doc.fontSize(8.5);
      text(`   Plug for ${s.plug_diameter_in} in: about ${m.mudLb.toFixed(1)} lb of paste (${m.mudLbRange[0].toFixed(1)}-${m.mudLbRange[1].toFixed(1)}), ${m.bentoniteLb.toFixed(1)} lb bentonite, ${m.waterGal.toFixed(2)} US gal water, ${m.plugLengthIn.toFixed(1)} in long, about ${m.mudBalls} balls.`);
      doc.fontSize(9.5);
    }
  }
  if (steps.some((s) => s.kind === 'plug')) {
    doc.fontSize(8).fillColor('#b3261e');
    text(MUD_PLUG_CAUTION);
    doc.fillColor('#14202b').fontSize(9.5);
  }

  heading('Latest gas tests');
  if (!gas.length) text('None recorded.');
  for (const g of gas) {
    const r = g.readings;
    text(`${when(g.tested_at)} ${g.place.replace(/_/g, ' ')}: ${g.verdict.toUpperCase()} - O2 ${r.o2Pct ?? '-'} %, LEL ${r.lelPct ?? '-'} %, H2S ${r.h2sPpm ?? '-'} ppm, CO ${r.coPpm ?? '-'} ppm`);
  }

  heading('Signatures');
  const signed = p.signatures as { event: PermitEvent; signedName: string; signedAt: string }[];
  for (const ev of signedEvents) {
    const s = [...signed].reverse().find((x) => x.event === ev);
    text(`${permitEventLabels[ev]}: ${s ? `${s.signedName}, ${when(s.signedAt)} (password re-entered)` : '________________________'}`);
  }
  heading('Record');
  for (const e of (p.timeline as { occurredAt: string; action: string; actorName: string | null; toState: string | null; reason: string | null }[]).slice(-25)) {
    doc.fontSize(8.5);
    text(`${when(e.occurredAt)}  ${e.action.replace(/_/g, ' ')}${e.toState ? ` -> ${e.toState.replace(/_/g, ' ')}` : ''}  ${e.actorName ?? 'Holdpoint'}${e.reason ? ` - ${e.reason}` : ''}`);
  }
  doc.end();
  return done;
}
