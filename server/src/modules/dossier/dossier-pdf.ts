import PDFDocument from 'pdfkit';
import { QueryTypes } from 'sequelize';
import { GASES, type Gas } from '@shared/calc';
import { gaugeUnitLabels, type GaugeUnit } from '@shared/calc/pressure';
import { gasUnitLabels, positionText } from '@shared/permit/record-words';
import { isCertificateLive } from '@shared/isolations/certificate-states';
import { gasTestPlaceLabels } from '@shared/schemas/gas-tests.schema';
import type { PermitDetail } from '@shared/types/permits';
import { formatInZone } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { boundText, defaultUnits, drawPermit, gasNames, MARGIN, readingKeys, stampPages, write } from '../permits/permit-pdf';
import type { PrintRecord } from '../permits/permit-print-record';
import { drawCheckpoint, type CheckpointPrint } from '../audit/checkpoint-print';
import { drawGasChart, type GasChart } from './gas-chart';

// The dossier: the printed permit's whole record (drawn by the same code), then what only the dossier
// carries: the isolation certificates, a chart of every gas, the attachments and the signed checkpoint.

export interface CertificateRow {
  id: string; number: string; state: 'live' | 'returned'; from_position: number; to_position: number; pipeline_name: string;
  issued_by: string; issued_signed_name: string; issued_at: Date; long_term: boolean; long_term_reason: string | null; recheck_hours: number | null;
  problem: string | null; problem_at: Date | null; returned_by: string | null; returned_at: Date | null; linked_at: Date | null; released_at: Date | null;
}
export interface RecheckRow {
  certificate_id: string; checked_at: Date; checked_by: string; locks_and_tags_intact: boolean; valves_still_closed: boolean;
  gauge_reading: number; gauge_unit: GaugeUnit; max_pressure: number; max_pressure_unit: GaugeUnit; result: 'pass' | 'fail'; failure: string | null; notes: string | null;
}
export interface AttachmentRow {
  id: string; original_name: string; content_type: string; size_bytes: number; sha256: string; uploaded_by: string; created_at: Date; entity_type: string;
}

/** The isolation certificates this permit was issued or relied on, with their re-checks; read in the caller's tenant transaction. */
export async function loadCertificates(deps: AppDeps, tenantId: string, permitId: string) {
  const r = { replacements: { tenantId, id: permitId }, type: QueryTypes.SELECT } as const;
  const certificates = await deps.sequelize.query<CertificateRow>(
    `SELECT c.id, c.number, c.state, c.from_position::float8 AS from_position, c.to_position::float8 AS to_position, pl.name AS pipeline_name,
            ui.name AS issued_by, c.issued_signed_name, c.issued_at, c.long_term, c.long_term_reason, c.recheck_hours, c.problem, c.problem_at,
            ur.name AS returned_by, c.returned_at, cp.linked_at, cp.released_at
     FROM isolation_certificates c
     JOIN pipelines pl ON pl.tenant_id = c.tenant_id AND pl.id = c.pipeline_id
     JOIN users ui ON ui.id = c.issued_by LEFT JOIN users ur ON ur.id = c.returned_by
     LEFT JOIN LATERAL (SELECT min(linked_at) AS linked_at, max(released_at) AS released_at FROM certificate_permits x
                        WHERE x.tenant_id = c.tenant_id AND x.certificate_id = c.id AND x.permit_id = :id) cp ON true
     WHERE c.tenant_id = :tenantId AND (c.issued_for_permit_id = :id OR cp.linked_at IS NOT NULL)
     ORDER BY c.issued_at`,
    r,
  );
  const rechecks = certificates.length
    ? await deps.sequelize.query<RecheckRow>(
        `SELECT k.certificate_id, k.checked_at, u.name AS checked_by, k.locks_and_tags_intact, k.valves_still_closed, k.gauge_reading::float8 AS gauge_reading,
                k.gauge_unit, k.max_pressure::float8 AS max_pressure, k.max_pressure_unit, k.result, k.failure, k.notes
         FROM isolation_rechecks k JOIN users u ON u.id = k.checked_by
         WHERE k.tenant_id = :tenantId AND k.certificate_id IN (:ids) ORDER BY k.checked_at`,
        { replacements: { tenantId, ids: certificates.map((c) => c.id) }, type: QueryTypes.SELECT },
      )
    : [];
  return { certificates, rechecks };
}

/** The permit's attachments, oldest first. */
export const loadAttachmentList = (deps: AppDeps, tenantId: string, permitId: string) =>
  deps.sequelize.query<AttachmentRow>(
    `SELECT a.id, a.original_name, a.content_type, a.size_bytes, a.sha256, u.name AS uploaded_by, a.created_at, a.entity_type
     FROM attachments a JOIN users u ON u.id = a.uploaded_by WHERE a.tenant_id = :tenantId AND a.permit_id = :id ORDER BY a.created_at, a.id`,
    { replacements: { tenantId, id: permitId }, type: QueryTypes.SELECT },
  );

/** Photos the PDF can carry as they are. */
export const embeddable = (contentType: string) => contentType === 'image/jpeg' || contentType === 'image/png';

export interface DossierInput {
  permit: PermitDetail<Date>;
  record: PrintRecord;
  certificates: Awaited<ReturnType<typeof loadCertificates>>;
  attachments: AttachmentRow[];
  /** The bytes of each photo by attachment id; a photo missing here is listed, not shown. */
  photos: Map<string, Buffer>;
  /** The audit trail's head signed for this dossier, drawn as the printed permit draws it. */
  checkpoint: CheckpointPrint;
  url: string;
  qr: Buffer;
}

const attachedToWords: Record<string, string> = { permit: 'the permit', isolation_step: 'an isolation step', gas_test: 'a gas test' };
const sizeWords = (n: number) => (n >= 1024 * 1024 ? `${(n / 1024 / 1024).toFixed(1)} MB` : `${Math.max(1, Math.round(n / 1024))} kB`);

/** Lays the dossier out and returns the finished file. */
export function renderDossier(deps: AppDeps, input: DossierInput): Promise<Buffer> {
  const { permit: p, record, certificates, attachments, photos, checkpoint } = input;
  const { timeZone, locationUnit } = record.settings;
  const when = (d: Date | string | null | undefined) => (d ? formatInZone(d, timeZone) : '-');
  const doc = new PDFDocument({
    size: 'A4', bufferPages: true, margins: { top: MARGIN, left: MARGIN, right: MARGIN, bottom: MARGIN + 34 },
    info: { Title: `Dossier for permit ${p.number}`, Author: 'Holdpoint', Subject: p.title },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  const width = doc.page.width - 2 * MARGIN;
  const bottom = () => doc.page.height - doc.page.margins.bottom;
  const text = (v: unknown) => write(doc, v, { width });
  const small = (v: unknown) => {
    doc.fontSize(8.5);
    text(v);
    doc.fontSize(9.5);
  };
  const heading = (t: string, newPage = false) => {
    if (newPage) doc.addPage();
    else if (doc.y > bottom() - 60) doc.addPage();
    doc.moveDown(0.6).fontSize(12).fillColor('#10252f');
    write(doc, t, { width }, 700).moveDown(0.2);
    doc.fontSize(9.5).fillColor('#14202b');
  };

  drawPermit(doc, deps, p, record, input.url, input.qr);

  heading('Isolation certificates', true);
  if (!certificates.certificates.length) text('No isolation certificate was issued for this permit or relied on by it.');
  for (const c of certificates.certificates) {
    write(doc, `Certificate ${c.number}: ${isCertificateLive(c) ? 'in force' : 'returned'}`, { width }, 700);
    small(`Section of ${c.pipeline_name} from ${positionText(c.from_position, locationUnit)} to ${positionText(c.to_position, locationUnit)}.`);
    small(`Issued by ${c.issued_by}, signed "${c.issued_signed_name}", ${when(c.issued_at)}.`);
    if (c.linked_at) small(`This permit relied on it from ${when(c.linked_at)}${c.released_at ? ` to ${when(c.released_at)}` : ''}.`);
    if (c.long_term) small(`Long-term isolation: ${c.long_term_reason ?? ''}; re-checked every ${c.recheck_hours} hours.`);
    if (c.problem) small(`Problem reported ${when(c.problem_at)}: ${c.problem}`);
    if (c.returned_at) small(`Returned by ${c.returned_by ?? '-'}, ${when(c.returned_at)}.`);
    for (const k of certificates.rechecks.filter((x) => x.certificate_id === c.id))
      small(
        `   Re-check ${when(k.checked_at)} by ${k.checked_by}: ${k.result === 'pass' ? 'passed' : `failed: ${k.failure ?? ''}`}; locks and tags ${k.locks_and_tags_intact ? 'intact' : 'NOT intact'}, valves ${k.valves_still_closed ? 'still closed' : 'NOT closed'}; gauge ${k.gauge_reading} ${gaugeUnitLabels[k.gauge_unit]} (at most ${k.max_pressure} ${gaugeUnitLabels[k.max_pressure_unit]})${k.notes ? `. ${k.notes}` : ''}`,
      );
  }

  heading('Gas readings charted');
  if (!record.gas.length) text('No gas test was recorded.');
  else {
    small('Each chart shows one gas: a line for each place tested, a dot for each reading, and the limit the readings were judged against as a dashed red line.');
    for (const gas of GASES as readonly Gas[]) {
      const points = record.gas.flatMap((g) => {
        const v = g.readings?.[readingKeys[gas]];
        if (v === null || v === undefined) return [];
        const place = g.place === 'other' && g.place_note ? g.place_note : gasTestPlaceLabels[g.place] ?? 'other place';
        return [{ at: new Date(g.tested_at), value: Number(v), series: place }];
      });
      if (!points.length) continue;
      const limitWords = new Map<string, { value: number; words: string }>();
      let unit = defaultUnits[gas];
      for (const g of record.gas) {
        const limit = g.assessment?.gases?.[gas]?.limit;
        if (!limit) continue;
        unit = limit.unit;
        for (const value of [limit.min, limit.max]) if (value !== undefined) limitWords.set(`${value}`, { value, words: boundText(limit) });
      }
      const chart: GasChart = { title: gasNames[gas], unit: gasUnitLabels[unit] ?? unit, points, limits: [...limitWords.values()], fromZero: gas !== 'o2' };
      if (doc.y + 175 > bottom()) doc.addPage();
      drawGasChart(doc, chart, timeZone, width);
      doc.moveDown(0.4);
    }
  }

  heading('Attachments');
  if (!attachments.length) text('No files were attached.');
  for (const a of attachments) {
    const photo = photos.get(a.id);
    const facts = `${a.original_name} - ${sizeWords(a.size_bytes)}, attached to ${attachedToWords[a.entity_type] ?? 'the permit'} by ${a.uploaded_by}, ${when(a.created_at)}`;
    if (doc.y > bottom() - 40) doc.addPage();
    write(doc, facts, { width }, 700);
    doc.fontSize(7.5);
    text(`SHA-256 ${a.sha256}`);
    doc.fontSize(9.5);
    if (!photo) {
      if (!embeddable(a.content_type)) small('A document or a photo in a format this PDF cannot show: open it in Holdpoint; the hash above identifies the file.');
      continue;
    }
    let img: { width: number; height: number };
    try {
      img = (doc as unknown as { openImage(src: Buffer): { width: number; height: number } }).openImage(photo);
    } catch {
      small('This photo could not be read, so it is not shown; the hash above identifies the file.');
      continue;
    }
    // Scaled to fit the page width and at most 300 points high, never enlarged.
    const scale = Math.min(width / img.width, 300 / img.height, 1);
    const h = img.height * scale;
    if (doc.y + h + 6 > bottom()) doc.addPage();
    doc.image(img as unknown as Buffer, MARGIN, doc.y + 3, { width: img.width * scale, height: h });
    doc.x = MARGIN;
    doc.y += 8;
  }

  drawCheckpoint(doc, checkpoint, MARGIN);

  const signed = checkpoint.checkpoint;
  stampPages(doc, p.number, record.chain, `dossier  -  signed checkpoint at entry no. ${signed.seq}, hash ${signed.hash.slice(0, 12)}`);
  doc.end();
  return done;
}
