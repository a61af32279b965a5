/**
 * The printable label sheet: one label per lock or tag, each with a QR code of its address in
 * Holdpoint, its number large, the tenant's name and a short line. The grid is the common A4 sheet
 * of 21 labels (3 across, 7 down, 63.5 × 38.1 mm each; top and bottom margins 15.15 mm, left and
 * right 7.21 mm, 2.54 mm between columns, rows touching), sold as L7160 / J8160 and their look-alikes,
 * so a sheet prints onto stock found in any site office; on plain paper it cuts along the same grid.
 * Text is Noto Sans, as on the printed permit.
 */
import PDFDocument from 'pdfkit';
import QRCode from 'qrcode';
import { labelAddress, labelKindWords } from '@shared/assets/label-address';
import { fontRuns, selectFont, type FontWeight } from '../permits/pdf-fonts';
import type { LabelItem, LabelSheet } from './labels.service';

const MM = 72 / 25.4;

/** The label grid, in millimetres. */
export const LABEL_GRID = {
  columns: 3,
  rows: 7,
  labelWidth: 63.5,
  labelHeight: 38.1,
  top: 15.15,
  left: 7.21,
  columnPitch: 66.04,
  rowPitch: 38.1,
} as const;

const PAD = 2.5 * MM;
/** The QR code's square, its quiet zone of 4 modules (ISO/IEC 18004) included. */
const QR_SIDE = 31 * MM;
const QUIET_MODULES = 4;
const INK = '#10252f';
const DANGER = '#b3261e';

/** The width of text set in Noto Sans at the current size, across the font's parts. */
function widthOf(doc: PDFKit.PDFDocument, text: string, weight: FontWeight): number {
  return fontRuns(text, weight).reduce((w, run) => w + selectFont(doc, run).widthOfString(run.text), 0);
}

/** Writes text in Noto Sans inside a box; one part of the font keeps pdfkit's wrapping and ellipsis. */
function writeBox(doc: PDFKit.PDFDocument, text: string, x: number, y: number, options: { width: number; height: number }, weight: FontWeight = 400) {
  const runs = fontRuns(text, weight);
  if (!runs.length) return;
  if (runs.length === 1) {
    selectFont(doc, runs[0]).text(runs[0].text, x, y, { ...options, ellipsis: true, lineGap: 0 });
    return;
  }
  runs.forEach((run, i) => {
    const continued = i < runs.length - 1;
    selectFont(doc, run);
    if (i === 0) doc.text(run.text, x, y, { width: options.width, continued });
    else doc.text(run.text, { continued });
  });
}

/** The QR code drawn as vector squares (sharp at any printer's resolution), dark modules row by row. */
function drawQr(doc: PDFKit.PDFDocument, text: string, x: number, y: number, side: number) {
  const qr = QRCode.create(text, { errorCorrectionLevel: 'M' });
  const n = qr.modules.size;
  const cell = side / (n + 2 * QUIET_MODULES);
  const at = (i: number) => (i + QUIET_MODULES) * cell;
  for (let r = 0; r < n; r++) {
    let c = 0;
    while (c < n) {
      if (!qr.modules.get(r, c)) {
        c++;
        continue;
      }
      const start = c;
      while (c < n && qr.modules.get(r, c)) c++;
      // A hair of overlap keeps printers from leaving white seams between touching squares.
      doc.rect(x + at(start), y + at(r), (c - start) * cell + 0.05, cell + 0.05);
    }
  }
  doc.fillColor('#000000').fill();
}

function drawLabel(doc: PDFKit.PDFDocument, publicUrl: string, tenantName: string, label: LabelItem, x: number, y: number) {
  const w = LABEL_GRID.labelWidth * MM;
  const h = LABEL_GRID.labelHeight * MM;
  drawQr(doc, labelAddress(publicUrl, label.kind, label.number), x + (h - QR_SIDE) / 2, y + (h - QR_SIDE) / 2, QR_SIDE);
  const tx = x + (h - QR_SIDE) / 2 + QR_SIDE + 1 * MM;
  const tw = x + w - PAD - tx;
  let ty = y + PAD;

  doc.fontSize(7).fillColor(label.kind === 'tag' ? DANGER : INK);
  writeBox(doc, labelKindWords[label.kind].toUpperCase(), tx, ty, { width: tw, height: 9 }, 700);
  ty += 9;

  // The number as large as fits the column: it is what a person reads from arm's length. A long
  // number wraps at its smallest size rather than lose a character.
  let size = 20;
  doc.fontSize(size);
  while (size > 10 && widthOf(doc, label.number, 700) > tw) doc.fontSize((size -= 1));
  doc.fillColor('#000000');
  const numberHeight = Math.min(3 * size * 1.3, fontRuns(label.number, 700).length === 1 ? selectFont(doc, fontRuns(label.number, 700)[0]).heightOfString(label.number, { width: tw }) : size * 1.3);
  writeBox(doc, label.number, tx, ty, { width: tw, height: numberHeight + 1 }, 700);
  ty += numberHeight;

  const nameBox = 19;
  doc.fontSize(6.5).fillColor(INK);
  writeBox(doc, tenantName, tx, ty, { width: tw, height: nameBox }, 700);
  ty += Math.min(nameBox, doc.heightOfString(tenantName, { width: tw })) + 1.5;

  doc.fontSize(6).fillColor('#3d4b57');
  writeBox(doc, label.line, tx, ty, { width: tw, height: Math.max(8, y + h - PAD - ty) });
}

/**
 * Lays the sheet into `out` and resolves when `out` has taken the last byte. The labels were read
 * before this is called, so a refusal is answered as an error before any byte is sent.
 */
export async function writeLabelSheet(sheet: LabelSheet, publicUrl: string, out: NodeJS.WritableStream): Promise<void> {
  const doc = new PDFDocument({ size: 'A4', autoFirstPage: false, margin: 0, info: { Title: sheet.title, Author: 'Holdpoint', Subject: sheet.tenantName } });
  const finished = new Promise<void>((resolve, reject) => {
    out.on('finish', resolve);
    out.on('close', resolve);
    out.on('error', reject);
    doc.on('error', reject);
  });
  doc.pipe(out);
  const perPage = LABEL_GRID.columns * LABEL_GRID.rows;
  sheet.labels.forEach((label, i) => {
    const slot = i % perPage;
    if (slot === 0) doc.addPage({ size: 'A4', margin: 0 });
    const col = slot % LABEL_GRID.columns;
    const row = Math.floor(slot / LABEL_GRID.columns);
    drawLabel(doc, publicUrl, sheet.tenantName, label, (LABEL_GRID.left + col * LABEL_GRID.columnPitch) * MM, (LABEL_GRID.top + row * LABEL_GRID.rowPitch) * MM);
  });
  doc.end();
  await finished;
}
