/**
 * The report PDF's fonts: IBM Plex Sans (400 and 600) from the app's own
 * `@fontsource/ibm-plex-sans` files, one file per script subset (latin,
 * latin-ext, cyrillic, cyrillic-ext, greek, vietnamese). Text is cut into
 * runs by the first subset that has each character, so names typed in Polish,
 * Czech, Turkish, Russian, Greek or Vietnamese print as typed. Characters no
 * subset has (CJK, for one) keep the fallback of the Latin-only days: a
 * few signs are spelled out (SPELLED: ≈ ≥ ≤ → ←), anything else prints as
 * "?", so nothing vanishes and nothing throws.
 *
 * Text of more than one run is broken into lines here (`layoutRuns`), not by
 * pdfkit: pdfkit wraps each `continued` fragment on its own and may break a
 * word where its letters change subset ("Łą|ka"), and its `heightOfString`
 * measures one font only. Measuring (`heightOfRuns`) and drawing
 * (`writeRuns`) use the same lines, so table rows fit their text.
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

/**
 * What a document keeps of a font (pdfkit 0.17's EmbeddedFont): the parsed
 * font, the glyph subset it will embed, and the shaped words.
 */
interface PdfkitFont {
  font: fontkit.Font;
  layoutCache?: Record<string, unknown>;
}
type PdfkitFontClass = new (doc: PDFKit.PDFDocument, font: fontkit.Font, id: string) => PdfkitFont;
/** The internals of a pdfkit document this module fills in (pdfkit 0.17: `font()` looks a name up in `_fontFamilies` first). */
interface PdfkitDocInternals {
  _fontFamilies: Record<string, PdfkitFont>;
  _fontCount: number;
  _font: PdfkitFont;
}

/** Shaped words kept per font file before the memo starts afresh (a report uses a few thousand). */
export const SHAPED_WORDS_KEPT = 20_000;

interface SharedFace {
  font: fontkit.Font;
  shaped: Record<string, unknown>;
  /** Advance widths of measured strings, in font units. */
  widths: Map<string, number>;
}
const sharedFaces = new Map<string, SharedFace>();
/** The thread's parsed font of a face's subset, with its memo of shaped words. */
function sharedFace(face: Face, subset: Subset): SharedFace {
  const name = fontName(face, subset);
  let shared = sharedFaces.get(name);
  if (!shared) sharedFaces.set(name, (shared = { font: fontkit.create(sfntOfWoffFile(fontFile(face, subset))) as fontkit.Font, shaped: Object.create(null) as Record<string, unknown>, widths: new Map() }));
  return shared;
}
let embeddedFontClass: PdfkitFontClass | null = null;

/** A count of the words shaped into the thread's memo (tests). */
export const shapedWordCount = (face: Face, subset: Subset) => Object.keys(sharedFaces.get(fontName(face, subset))?.shaped ?? {}).length;

/**
 * Register every subset of both faces with a pdfkit document.
 *
 * Each font file is parsed once per thread and its shaped words (fontkit's
 * layout with the font's kerning and ligatures, the largest share of a
 * report's text work) are kept between documents: pdfkit gives every new
 * document a freshly parsed font and an empty word memo, so every report
 * shaped the same words ("Cycle", "P50", the caution) again. What a document
 * owns stays its own: the glyph subset it embeds and its widths and
 * ToUnicode tables. A word's shaping depends only on the font file and the
 * word, so a shaped word is the same in every document. The memo starts
 * afresh past SHAPED_WORDS_KEPT words per file.
 */
export function registerFaces(doc: PDFKit.PDFDocument) {
  const inside = doc as unknown as PdfkitDocInternals;
  for (const face of Object.keys(WEIGHT) as Face[]) {
    for (const subset of SUBSETS) {
      const name = fontName(face, subset);
      doc.registerFont(name, sfntOfWoffFile(fontFile(face, subset)));
      if (!embeddedFontClass) {
        // pdfkit does not export its embedded-font class: the first font it opens the ordinary way shows it
        doc.font(name);
        embeddedFontClass = inside._font.constructor as PdfkitFontClass;
      }
      const shared = sharedFace(face, subset);
      if (Object.keys(shared.shaped).length > SHAPED_WORDS_KEPT) shared.shaped = Object.create(null) as Record<string, unknown>;
      const font = new embeddedFontClass(doc, shared.font, `F${++inside._fontCount}`);
      font.layoutCache = shared.shaped;
      inside._fontFamilies[name] = font;
    }
  }
}

/**
 * The width (px at `sizePx`) `text` takes in `face` as the PDF draws it:
 * each run in its subset's font, shaped with the font's kerning and
 * ligatures. For ECharts' label layout on the server (pdf.ts), which
 * otherwise guesses widths from a table of a generic sans-serif.
 */
export function textWidth(face: Face, text: string, sizePx: number): number {
  let units = 0;
  for (const r of pdfRuns(text)) {
    const shared = sharedFace(face, r.subset);
    let w = shared.widths.get(r.text);
    if (w === undefined) {
      if (shared.widths.size >= SHAPED_WORDS_KEPT) shared.widths.clear();
      w = (shared.font.layout(r.text).advanceWidth * 1000) / shared.font.unitsPerEm;
      shared.widths.set(r.text, w);
    }
    units += w;
  }
  return (units * sizePx) / 1000;
}

/** Whether a subset's file has a glyph for a code point (the 400 and 600 files of a subset cover the same characters). */
export const covers = (subset: Subset, cp: number) => sharedFace('plex', subset).font.hasGlyphForCodePoint(cp);

/** Whether some subset has a glyph for the character (white space always counts). */
export const inAnySubset = (ch: string) => /\s/.test(ch) || SUBSETS.some((sub) => covers(sub, ch.codePointAt(0)!));

const SUPER: Record<string, string> = { '⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9', '⁻': '-' };
/**
 * Signs the report's own wording uses that no subset has, spelled out in
 * plain letters. Only a fallback: a character some subset has is printed as
 * typed (θ, Δ, Σ, μ are in the Greek subset, so a name in Greek keeps them).
 */
export const SPELLED: Record<string, string> = { '≈': '~', '≥': '>=', '≤': '<=', '→': '->', '←': '<-' };

export interface Run {
  subset: Subset;
  text: string;
}

/**
 * Text as runs of one subset each: "× 10⁹" → "× 10^9" first (², ³ in units
 * stay), then each character in the first subset that has it (white space
 * stays in the run it follows: every subset has the space). A character no
 * subset has keeps the fallback of the Latin-only font: a SPELLED sign is
 * spelled out, white space becomes a space, anything else "?".
 * Composed first (NFC), so a name typed as letter + combining accent finds
 * its precomposed letter.
 */
export function pdfRuns(s: string): Run[] {
  const t = s.normalize('NFC').replace(/10([⁰¹²³⁴⁵⁶⁷⁸⁹⁻]+)/g, (_m, e: string) => `10^${[...e].map((c) => SUPER[c]).join('')}`);
  const runs: Run[] = [];
  const push = (subset: Subset, text: string) => {
    const last = runs[runs.length - 1];
    if (last && last.subset === subset) last.text += text;
    else runs.push({ subset, text });
  };
  for (const ch of t) {
    const cp = ch.codePointAt(0)!;
    const current = runs[runs.length - 1]?.subset;
    if (current && (ch === ' ' || ch === '\u00a0') && covers(current, cp)) push(current, ch);
    else if (cp < 0x80) push('latin', ch);
    else {
      const subset = SUBSETS.find((sub) => covers(sub, cp));
      if (subset) push(subset, ch);
      else push('latin', SPELLED[ch] ?? (/\s/.test(ch) ? ' ' : '?'));
    }
  }
  return runs.length ? runs : [{ subset: 'latin', text: '' }];
}

/** The text as the PDF will show it, in one string (for single-font places and for tests). */
export const pdfText = (s: string): string =>
  pdfRuns(s)
    .map((r) => r.text)
    .join('');

/** A run's text on one line, with its width at the document's font size. */
export interface Piece extends Run {
  width: number;
}
/** One line: its pieces, and its width without trailing white space. */
export interface RunLine {
  pieces: Piece[];
  width: number;
}

/** What lines are laid out 1/1000 pt narrower than asked, so pdfkit never wraps a piece again over rounding. */
const SLACK = 1e-3;

type Cell = { subset: Subset; ch: string };

/** The pieces of a row of characters, adjacent characters of one subset together, measured in `face`. */
function piecesOf(doc: PDFKit.PDFDocument, face: Face, cells: Cell[]): RunLine {
  const pieces: Piece[] = [];
  for (const c of cells) {
    const last = pieces[pieces.length - 1];
    if (last && last.subset === c.subset) last.text += c.ch;
    else pieces.push({ subset: c.subset, text: c.ch, width: 0 });
  }
  let width = 0;
  for (const p of pieces) width += p.width = doc.font(fontName(face, p.subset)).widthOfString(p.text);
  return { pieces, width };
}

const isSpace = (ch: string) => ch === ' ' || ch === '\u00a0' || ch === '\t';
const trimEnd = (cells: Cell[]) => {
  let n = cells.length;
  while (n && isSpace(cells[n - 1].ch)) n--;
  return cells.slice(0, n);
};

/**
 * Words of one paragraph: each ends after its trailing spaces, or after a
 * hyphen followed by a letter ("Ωμέγα-|Łęg"); a hyphen before a digit stays
 * ("Ω-2"), as in Unicode's line breaking rules.
 */
function wordsOf(cells: Cell[]): Cell[][] {
  const words: Cell[][] = [];
  let word: Cell[] = [];
  cells.forEach((c, i) => {
    word.push(c);
    const next = cells[i + 1]?.ch;
    if (next === undefined) return;
    const spaceEnds = isSpace(c.ch) && !isSpace(next);
    const hyphenEnds = (c.ch === '-' || c.ch === '\u2010') && /\p{L}/u.test(next) && word.length > 1;
    if (spaceEnds || hyphenEnds) {
      words.push(word);
      word = [];
    }
  });
  if (word.length) words.push(word);
  return words;
}

/**
 * `text` in `face` at the document's font size broken into lines no wider
 * than `width`: at the ends of words (white space counted as pdfkit counts
 * it, with the word before it), at hard line breaks, and inside a word only
 * when the word alone is wider than the line. Trailing white space is dropped.
 * Leaves the face's Latin font selected.
 */
export function layoutRuns(doc: PDFKit.PDFDocument, face: Face, text: string, width: number): RunLine[] {
  const room = width - SLACK;
  const measure = (cells: Cell[]) => piecesOf(doc, face, cells).width;
  const lines: RunLine[] = [];
  const cells: Cell[][] = [[]];
  for (const r of pdfRuns(text)) for (const ch of r.text) {
    if (ch === '\n') cells.push([]);
    else if (ch !== '\r') cells[cells.length - 1].push({ subset: r.subset, ch });
  }
  for (const paragraph of cells) {
    let line: Cell[] = [];
    let lineWidth = 0;
    const flush = () => {
      lines.push(piecesOf(doc, face, trimEnd(line)));
      line = [];
      lineWidth = 0;
    };
    for (let word of wordsOf(paragraph)) {
      let w = measure(word);
      if (line.length && lineWidth + w > room) flush();
      // a word wider than the whole line: as many characters as fit on each line (at least one), as pdfkit does
      let bare = trimEnd(word);
      while (!line.length && bare.length > 1 && measure(bare) > room) {
        let lo = 1;
        let hi = bare.length - 1;
        while (lo < hi) {
          const mid = Math.ceil((lo + hi) / 2);
          if (measure(bare.slice(0, mid)) <= room) lo = mid;
          else hi = mid - 1;
        }
        line = word.slice(0, lo);
        flush();
        word = word.slice(lo);
        bare = trimEnd(word);
        w = measure(word);
      }
      line.push(...word);
      lineWidth += w;
    }
    flush();
  }
  doc.font(face);
  return lines;
}

/** Options `writeRuns` and `heightOfRuns` honour (the report uses no others). */
export type RunOptions = Pick<PDFKit.Mixins.TextOptions, 'width' | 'lineGap' | 'lineBreak'>;

const widthAt = (doc: PDFKit.PDFDocument, x: number, options: RunOptions) => options.width ?? doc.page.width - x - doc.page.margins.right;

/**
 * The height `writeRuns` takes for `text` (pdfkit's `heightOfString` when the
 * text is one run, in that run's font). Leaves the face's Latin font selected.
 */
export function heightOfRuns(doc: PDFKit.PDFDocument, face: Face, text: string, options: RunOptions = {}): number {
  const runs = pdfRuns(text);
  if (runs.length === 1) {
    const h = doc.font(fontName(face, runs[0].subset)).heightOfString(runs[0].text, options);
    doc.font(face);
    return h;
  }
  const lines = layoutRuns(doc, face, text, widthAt(doc, doc.x, options));
  return lines.length * (doc.currentLineHeight(true) + (options.lineGap ?? 0));
}

/**
 * Write `text` with `face` at (x, y), or where the document's cursor is, in
 * runs of one subset each. One run is one `doc.text` call as ever; more are
 * laid out by `layoutRuns` and each line written as pieces joined by
 * pdfkit's `continued`, so pdfkit still moves the cursor, starts new pages
 * and embeds the subsets, but breaks lines only where `layoutRuns` did. The
 * subsets' line metrics are the same, so a line is as high as in one font.
 * Leaves the face's Latin font selected.
 */
export function writeRuns(doc: PDFKit.PDFDocument, face: Face, text: string, at: { x: number; y: number } | null, options: RunOptions = {}) {
  const runs = pdfRuns(text);
  const draw = (s: string, o: PDFKit.Mixins.TextOptions, first: boolean) => (first && at ? doc.text(s, at.x, at.y, o) : doc.text(s, o));
  if (runs.length === 1) {
    doc.font(fontName(face, runs[0].subset));
    draw(runs[0].text, options, true);
  } else {
    const width = widthAt(doc, at?.x ?? doc.x, options);
    layoutRuns(doc, face, text, width).forEach((line, li) => {
      // an empty line (two hard breaks in a row) still takes its height, as in pdfkit
      const pieces = line.pieces.length ? line.pieces : [{ subset: 'latin' as const, text: ' ', width: 0 }];
      pieces.forEach((p, pi) => {
        doc.font(fontName(face, p.subset));
        draw(p.text, { ...options, width, continued: pi < pieces.length - 1 }, li === 0 && pi === 0);
      });
    });
  }
  doc.font(face);
}
