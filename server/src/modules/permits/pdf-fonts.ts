/**
 * Noto Sans for the printed permit, so names such as "Zoë Ó Briain" or "Łukasz" print as written.
 * The standard PDF fonts cover Latin-1 only. @fontsource/noto-sans ships the font split by script
 * (latin, latin-ext, greek, cyrillic …) as WOFF, each with the Unicode ranges it covers in
 * unicode.json. Text is cut into runs, each set in the part that covers it.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { inflateSync } from 'node:zlib';

const require = createRequire(import.meta.url);

export type FontWeight = 400 | 700;

// Order matters: a character is set in the first part that covers it.
const SUBSETS = ['latin', 'latin-ext', 'vietnamese', 'greek', 'greek-ext', 'cyrillic', 'cyrillic-ext', 'devanagari'] as const;
export type Subset = (typeof SUBSETS)[number];

function parseRanges(text: string): [number, number][] {
  return text.split(',').map((part) => {
    const [from, to] = part.trim().replace(/^U\+/i, '').split('-');
    return [parseInt(from, 16), parseInt(to ?? from, 16)];
  });
}

const declared = require('@fontsource/noto-sans/unicode.json') as Record<string, string>;
const coverage = new Map<Subset, [number, number][]>(SUBSETS.map((s) => [s, parseRanges(declared[s] ?? '')]));
const covers = (subset: Subset, cp: number) => coverage.get(subset)!.some(([a, b]) => cp >= a && cp <= b);

/** Characters no part of the font has, written the way a typist would. */
const standIns: Record<string, string> = { '≥': '>=', '≤': '<=', '≠': '!=', '→': '->', '←': '<-', '↔': '<->', '✓': 'x', '✕': 'x', '✗': 'x' };
for (let d = 0; d <= 9; d++) standIns[String.fromCodePoint(0x2080 + d)] = String(d);

export interface FontRun {
  font: string;
  subset: Subset;
  weight: FontWeight;
  text: string;
}

const fontName = (subset: Subset, weight: FontWeight) => `NotoSans-${subset}-${weight}`;

/**
 * Cuts text into runs of one font each. Composed form first (NFC), so a name typed with combining
 * accents prints with the precomposed letter; a character no part covers is replaced, "?" at last.
 */
export function fontRuns(value: unknown, weight: FontWeight = 400): FontRun[] {
  const runs: { subset: Subset; text: string }[] = [];
  for (const ch of String(value ?? '').normalize('NFC')) {
    const text = standIns[ch] ?? ch;
    for (const c of text) {
      const cp = c.codePointAt(0)!;
      const last = runs.at(-1);
      // Tabs and line breaks go with the run they are in; pdfkit lays them out, no glyph is drawn.
      if (last && (c === '\n' || c === '\r' || c === '\t' || covers(last.subset, cp))) {
        last.text += c;
        continue;
      }
      const subset = SUBSETS.find((s) => covers(s, cp));
      const out = subset ? c : '?';
      const into = subset ?? 'latin';
      if (last && last.subset === into) last.text += out;
      else runs.push({ subset: into, text: out });
    }
  }
  return runs.map((r) => ({ font: fontName(r.subset, weight), subset: r.subset, weight, text: r.text }));
}

/**
 * WOFF 1.0 (W3C Recommendation, 2012, sections 3-5) back to the plain OpenType file it wraps: each
 * table zlib-inflated when stored compressed, laid out 4-byte aligned behind a rebuilt table directory.
 * pdfkit would read the WOFF itself, but it inflates every table again for every document, three to
 * four times slower than reading the plain file (measured: about 90 ms against 25 ms a font part).
 */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.readUInt32BE(0) !== 0x774f4646) return woff; // 'wOFF'
  const count = woff.readUInt16BE(12);
  const log2 = Math.floor(Math.log2(count));
  const head = Buffer.alloc(12 + 16 * count);
  head.writeUInt32BE(woff.readUInt32BE(4), 0); // flavor: TrueType or CFF
  head.writeUInt16BE(count, 4);
  head.writeUInt16BE(2 ** log2 * 16, 6);
  head.writeUInt16BE(log2, 8);
  head.writeUInt16BE(count * 16 - 2 ** log2 * 16, 10);
  const parts: Buffer[] = [head];
  let offset = head.length;
  for (let i = 0; i < count; i++) {
    const entry = 44 + i * 20;
    const [tag, from, stored, length, checksum] = [0, 4, 8, 12, 16].map((at) => woff.readUInt32BE(entry + at));
    const raw = woff.subarray(from, from + stored);
    const data = stored < length ? inflateSync(raw) : raw;
    const record = 12 + i * 16;
    head.writeUInt32BE(tag, record);
    head.writeUInt32BE(checksum, record + 4);
    head.writeUInt32BE(offset, record + 8);
    head.writeUInt32BE(length, record + 12);
    const padded = Buffer.alloc(Math.ceil(data.length / 4) * 4);
    data.copy(padded);
    parts.push(padded);
    offset += padded.length;
  }
  return Buffer.concat(parts);
}

const files = new Map<string, Buffer>();

/** One part of the font as a plain OpenType file, read and unwrapped once per process. */
function fontFile(subset: Subset, weight: FontWeight): Buffer {
  const key = fontName(subset, weight);
  let buf = files.get(key);
  if (!buf) {
    buf = woffToSfnt(readFileSync(require.resolve(`@fontsource/noto-sans/files/noto-sans-${subset}-${weight}-normal.woff`)));
    files.set(key, buf);
  }
  return buf;
}

const registered = new WeakMap<PDFKit.PDFDocument, Set<string>>();

/** Selects a run's font, registering that part with the document the first time it is needed. */
export function selectFont(doc: PDFKit.PDFDocument, run: FontRun): PDFKit.PDFDocument {
  let names = registered.get(doc);
  if (!names) registered.set(doc, (names = new Set()));
  if (!names.has(run.font)) {
    doc.registerFont(run.font, fontFile(run.subset, run.weight));
    names.add(run.font);
  }
  return doc.font(run.font);
}
