/**
 * The report PDF's fonts: IBM Plex Sans (400 and 600) from the app's own
 * `@fontsource/ibm-plex-sans` files, one file per script subset (latin,
 * latin-ext, cyrillic, cyrillic-ext, greek, vietnamese). Text is cut into
 * runs by the first subset that has each character, so names typed in Polish,
 * Czech, Turkish, Russian, Greek or Vietnamese print as typed. Characters no
 * subset has (CJK, for one) fall back to the Latin face: a few signs are
 * spelled out (SPELLED), anything else prints as "?" rather than vanishing.
 *
 * Fonts are decompressed once per thread (woff.ts) and their coverage read
 * with fontkit (the font engine pdfkit itself uses).
 */
import path from 'node:path';
import * as fontkit from 'fontkit';
import { ROOT_DIR } from '../config';
import { sfntOfWoffFile } from './woff';

const FONT_DIR = path.join(ROOT_DIR, 'node_modules', '@fontsource', 'ibm-plex-sans', 'files');

/** Subsets in the order a character looks for its glyph. */
export const SUBSETS = ['latin', 'latin-ext', 'cyrillic', 'cyrillic-ext', 'greek', 'vietnamese'] as const;
export type Subset = (typeof SUBSETS)[number];
export type Face = 'plex' | 'plex-semi';
const WEIGHT: Record<Face, number> = { plex: 400, 'plex-semi': 600 };

export const fontFile = (face: Face, subset: Subset) => path.join(FONT_DIR, `ibm-plex-sans-${subset}-${WEIGHT[face]}-normal.woff`);
/** The name a subset of a face is registered under in a document (the Latin one under the face's own name). */
export const fontName = (face: Face, subset: Subset) => (subset === 'latin' ? face : `${face}-${subset}`);

/** Register every subset of both faces with a pdfkit document. */
export function registerFaces(doc: PDFKit.PDFDocument) {
  for (const face of Object.keys(WEIGHT) as Face[]) for (const s of SUBSETS) doc.registerFont(fontName(face, s), sfntOfWoffFile(fontFile(face, s)));
}

const coverage = new Map<Subset, fontkit.Font>();
function fontOf(subset: Subset): fontkit.Font {
  let f = coverage.get(subset);
  if (!f) coverage.set(subset, (f = fontkit.create(sfntOfWoffFile(fontFile('plex', subset))) as fontkit.Font));
  return f;
}

/** Whether a subset's file has a glyph for a code point (the 400 and 600 files of a subset cover the same characters). */
export const covers = (subset: Subset, cp: number) => fontOf(subset).hasGlyphForCodePoint(cp);

const SUPER: Record<string, string> = { '⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9', '⁻': '-' };
/** Signs spelled out in plain letters (kept so the report reads the same whatever the subsets hold). */
export const SPELLED: Record<string, string> = { '≈': '~', '≥': '>=', '≤': '<=', '→': '->', '←': '<-', 'θ': 'theta', 'Δ': 'delta', 'Σ': 'sum', 'μ': 'u', '…': '...' };

export interface Run {
  subset: Subset;
  text: string;
}

/**
 * Text as runs of one subset each: "× 10⁹" → "× 10^9" first (², ³ in units
 * stay), SPELLED signs spelled out, each other character in the first subset
 * that has it; white space no subset has becomes a space, anything else "?".
 */
export function pdfRuns(s: string): Run[] {
  const t = s.replace(/10([⁰¹²³⁴⁵⁶⁷⁸⁹⁻]+)/g, (_m, e: string) => `10^${[...e].map((c) => SUPER[c]).join('')}`);
  const runs: Run[] = [];
  const push = (subset: Subset, text: string) => {
    const last = runs[runs.length - 1];
    if (last && last.subset === subset) last.text += text;
    else runs.push({ subset, text });
  };
  for (const ch of t) {
    const cp = ch.codePointAt(0)!;
    if (cp < 0x80) push('latin', ch);
    else if (ch in SPELLED) push('latin', SPELLED[ch]);
    else {
      const subset = SUBSETS.find((sub) => covers(sub, cp));
      if (subset) push(subset, ch);
      else push('latin', /\s/.test(ch) ? ' ' : '?');
    }
  }
  return runs.length ? runs : [{ subset: 'latin', text: '' }];
}

/** The text as the PDF will show it, in one string (for single-font places and for measuring). */
export const pdfText = (s: string): string =>
  pdfRuns(s)
    .map((r) => r.text)
    .join('');

/**
 * Write `text` with `face` at (x, y), or where the document's cursor is, in
 * runs of one subset each (pdfkit's `continued` keeps one line box, so lines
 * wrap and align as for one string). Leaves the face's Latin font selected.
 */
export function writeRuns(doc: PDFKit.PDFDocument, face: Face, text: string, at: { x: number; y: number } | null, options: PDFKit.Mixins.TextOptions = {}) {
  const runs = pdfRuns(text);
  runs.forEach((r, i) => {
    doc.font(fontName(face, r.subset));
    const o = { ...options, continued: i < runs.length - 1 };
    if (i === 0 && at) doc.text(r.text, at.x, at.y, o);
    else doc.text(r.text, o);
  });
  doc.font(face);
}
