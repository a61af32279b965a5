import { formatInZone } from '@shared/time/zone';
import { write } from '../permits/permit-pdf';

export interface ChartPoint {
  at: Date;
  value: number;
  series: string;
}

export interface GasChart {
  title: string;
  unit: string;
  points: ChartPoint[];
  /** The limits drawn as dashed lines, each with its words ("at most 10 %LEL"). */
  limits: { value: number; words: string }[];
  /** Flammable gas, H2S and CO start at zero; oxygen sits in a band around 20.9 %. */
  fromZero: boolean;
}

const SERIES_COLOURS = ['#1b5e8c', '#b35c00', '#2e7d32', '#6a1b9a', '#00838f', '#5d4037'];
const LIMIT_COLOUR = '#b3261e';
const AXIS_COLOUR = '#3d4b57';

const roundNice = (v: number) => {
  if (v <= 0) return 1;
  const step = 10 ** Math.floor(Math.log10(v));
  return Math.ceil(v / step) * step;
};
const label = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 10 ? v.toFixed(1).replace(/\.0$/, '') : v.toFixed(2).replace(/\.?0+$/, ''));

/**
 * One gas's readings over time, drawn with vector lines: a line per place tested, a dot per reading,
 * each limit as a dashed red line with its words, the first and last test times in the site's zone.
 * Draws at the document's current position and moves below the chart; the caller keeps it on one page.
 */
export function drawGasChart(doc: PDFKit.PDFDocument, chart: GasChart, timeZone: string, width: number, height = 120) {
  const left = doc.page.margins.left;
  const axisWidth = 38;
  const top = doc.y + 14;
  const plotX = left + axisWidth;
  const plotW = width - axisWidth - 4;
  const plotH = height;

  doc.fontSize(9.5).fillColor('#10252f');
  write(doc, `${chart.title} (${chart.unit})`, { x: left, y: doc.y, width }, 700);

  const values = [...chart.points.map((p) => p.value), ...chart.limits.map((l) => l.value)];
  let lo = chart.fromZero ? 0 : Math.min(...values);
  let hi = Math.max(...values);
  if (chart.fromZero) hi = roundNice(hi * 1.15);
  else {
    const pad = Math.max((hi - lo) * 0.15, 0.5);
    lo = Math.floor((lo - pad) * 2) / 2;
    hi = Math.ceil((hi + pad) * 2) / 2;
  }
  if (hi <= lo) hi = lo + 1;
  const times = chart.points.map((p) => p.at.getTime());
  let t0 = Math.min(...times);
  let t1 = Math.max(...times);
  if (t1 - t0 < 60_000) {
    t0 -= 30 * 60_000;
    t1 += 30 * 60_000;
  }
  const xOf = (t: number) => plotX + ((t - t0) / (t1 - t0)) * plotW;
  const yOf = (v: number) => top + plotH - ((v - lo) / (hi - lo)) * plotH;

  // Frame and four grid lines with their values.
  doc.save();
  doc.lineWidth(0.5).strokeColor('#c7d0d8');
  for (let i = 0; i <= 4; i++) {
    const v = lo + ((hi - lo) * i) / 4;
    const y = yOf(v);
    doc.moveTo(plotX, y).lineTo(plotX + plotW, y).stroke();
    doc.fontSize(7).fillColor(AXIS_COLOUR);
    write(doc, label(v), { x: left, y: y - 4, width: axisWidth - 4, align: 'right', lineBreak: false });
  }
  doc.lineWidth(0.8).strokeColor(AXIS_COLOUR).rect(plotX, top, plotW, plotH).stroke();

  // Limits: dashed, with their words just above the line.
  for (const l of chart.limits) {
    if (l.value < lo || l.value > hi) continue;
    const y = yOf(l.value);
    doc.lineWidth(1).strokeColor(LIMIT_COLOUR).dash(4, { space: 3 }).moveTo(plotX, y).lineTo(plotX + plotW, y).stroke().undash();
    doc.fontSize(7).fillColor(LIMIT_COLOUR);
    write(doc, `limit: ${l.words}`, { x: plotX + 4, y: Math.max(top + 1, y - 9), width: plotW - 8, lineBreak: false });
  }

  // One line per place, a dot on each reading.
  const series = [...new Set(chart.points.map((p) => p.series))];
  series.forEach((name, i) => {
    const colour = SERIES_COLOURS[i % SERIES_COLOURS.length];
    const pts = chart.points.filter((p) => p.series === name).sort((a, b) => a.at.getTime() - b.at.getTime());
    doc.lineWidth(1.2).strokeColor(colour).fillColor(colour);
    pts.forEach((p, j) => (j === 0 ? doc.moveTo(xOf(p.at.getTime()), yOf(p.value)) : doc.lineTo(xOf(p.at.getTime()), yOf(p.value))));
    if (pts.length > 1) doc.stroke();
    for (const p of pts) doc.circle(xOf(p.at.getTime()), yOf(p.value), 2).fill();
  });
  doc.restore();

  // Time axis: first and last test, in the site's zone; then the key to the lines.
  doc.fontSize(7).fillColor(AXIS_COLOUR);
  write(doc, formatInZone(t0, timeZone), { x: plotX, y: top + plotH + 3, width: plotW / 2, lineBreak: false });
  write(doc, formatInZone(t1, timeZone), { x: plotX + plotW / 2, y: top + plotH + 3, width: plotW / 2, align: 'right', lineBreak: false });
  let keyX = plotX;
  const keyY = top + plotH + 14;
  series.forEach((name, i) => {
    const colour = SERIES_COLOURS[i % SERIES_COLOURS.length];
    doc.save().fillColor(colour).rect(keyX, keyY + 2, 8, 4).fill().restore();
    doc.fontSize(7).fillColor('#14202b');
    const w = Math.min(doc.widthOfString(name) + 20, plotW);
    write(doc, name, { x: keyX + 11, y: keyY, width: w, lineBreak: false });
    keyX += w + 6;
  });
  doc.x = left;
  doc.y = keyY + 14;
  doc.fillColor('#14202b').strokeColor('#000000').fontSize(9.5);
}
