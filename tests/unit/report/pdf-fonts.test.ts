/**
 * Runs of one script subset each for the report PDF, and the lines they are
 * broken into (server/reports/pdf-fonts.ts). Which subset holds which
 * letters is read from the font files themselves; the expectations below
 * follow Unicode's blocks (Unicode Standard, code charts: Basic Latin, Latin
 * Extended-A, Cyrillic, Greek and Coptic). Words whole in the PDF are read
 * back with poppler's pdftotext (poppler-utils, installed by
 * tests/setup/ensure-env.ts; missing, the test fails rather than skips).
 * All names are invented.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import PDFDocument from 'pdfkit';
import { afterAll, describe, expect, it } from 'vitest';
import { covers, heightOfRuns, layoutRuns, pdfRuns, pdfText, registerFaces, shapedWordCount, writeRuns } from '../../../server/reports/pdf-fonts';

const scratch = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-pdf-fonts-'));
afterAll(() => fs.rmSync(scratch, { recursive: true, force: true }));

/** A document with the report's faces, 10 pt, collected in memory. */
function newDoc() {
  const doc = new PDFDocument({ size: 'A5', margin: 30 });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const ended = new Promise<Buffer>((resolve) => doc.on('end', () => resolve(Buffer.concat(chunks))));
  registerFaces(doc);
  doc.font('plex').fontSize(10);
  return { doc, ended };
}

/** Mixed text whose words are all narrower than the widths tried below. */
const MIXED = 'Zażółć gęślą jaźń Łąka Холмы Ωρατα Холмы Łąka Żółć Ярослава Ωμέγα-Łęg Рифовна Ω-2';
const WIDTHS = [80, 90, 100, 110, 120, 130, 140, 160, 200];

describe('pdfRuns', () => {
  it('keeps plain Latin in one run', () => {
    expect(pdfRuns('Kestrel Knoll · TB-11')).toEqual([{ subset: 'latin', text: 'Kestrel Knoll · TB-11' }]);
  });

  it('cuts mixed text into Latin, Latin Extended, Cyrillic and Greek runs, in order, losing no letter', () => {
    const name = 'Łąka Холм Ωρα';
    const runs = pdfRuns(name);
    expect(runs.map((r) => r.text).join('')).toBe(name);
    // Ł (U+0141) and ą (U+0105) are Latin Extended-A; Х, о, л, м Cyrillic; Ω, ρ, α Greek; a space stays in the run before it
    expect(runs).toEqual([
      { subset: 'latin-ext', text: 'Łą' },
      { subset: 'latin', text: 'ka ' },
      { subset: 'cyrillic', text: 'Холм ' },
      { subset: 'greek', text: 'Ωρα' },
    ]);
  });

  it('keeps a name in one script with spaces in one run', () => {
    expect(pdfRuns('Ярослава Рифовна')).toEqual([{ subset: 'cyrillic', text: 'Ярослава Рифовна' }]);
  });

  it('composes a letter typed with a combining accent (NFC)', () => {
    // Z + U+0307 (dot above), o + U+0301 (acute), c + U+0301: NFC gives Ż, ó, ć
    expect(pdfText('Z\u0307o\u0301łc\u0301')).toBe('Żółć');
  });

  it('each subset covers its own block and not another script', () => {
    expect(covers('cyrillic', 'Ж'.codePointAt(0)!)).toBe(true);
    expect(covers('latin', 'Ж'.codePointAt(0)!)).toBe(false);
    expect(covers('greek', 'λ'.codePointAt(0)!)).toBe(true);
    expect(covers('latin-ext', 'ő'.codePointAt(0)!)).toBe(true);
  });

  it('prints Greek letters as typed, spells out signs no subset has, and prints "?" for a character no subset has (CJK)', () => {
    expect(pdfText('Ξανθίππη Δ-Σμ')).toBe('Ξανθίππη Δ-Σμ');
    expect(pdfText('VE ≈ 2× · 1.2 × 10⁹ m³')).toBe('VE ~ 2× · 1.2 × 10^9 m³');
    expect(pdfText('礁 Knoll')).toBe('? Knoll');
  });
});

describe('layoutRuns, heightOfRuns, writeRuns', () => {
  it('breaks lines only between words, each line within the width, losing no letter', () => {
    const { doc } = newDoc();
    const words = MIXED.replace('Ωμέγα-Łęg', 'Ωμέγα- Łęg').split(' ');
    for (const width of WIDTHS) {
      const lines = layoutRuns(doc, 'plex', MIXED, width);
      const texts = lines.map((l) => l.pieces.map((p) => p.text).join(''));
      expect(texts.join(' ').replace('Ωμέγα-Łęg', 'Ωμέγα- Łęg').split(' '), `width ${width}`).toEqual(words);
      // no line starts or ends with a space, and none is wider than asked
      for (const t of texts) expect(t).toBe(t.trim());
      for (const l of lines) expect(l.width).toBeLessThanOrEqual(width);
      expect(lines.length).toBeGreaterThan(1);
    }
    // wide enough: one line
    expect(layoutRuns(doc, 'plex', MIXED, 2000)).toHaveLength(1);
  });

  it('breaks after a hyphen before a letter, never before a digit', () => {
    const { doc } = newDoc();
    const widthOf = (s: string) => layoutRuns(doc, 'plex', s, 10_000)[0].width;
    const linesAt = (s: string, width: number) => layoutRuns(doc, 'plex', s, width).map((l) => l.pieces.map((p) => p.text).join(''));
    expect(linesAt('Ωμέγα-Łęg', widthOf('Ωμέγα-') + 1)).toEqual(['Ωμέγα-', 'Łęg']);
    expect(linesAt('Холм Ω-2', widthOf('Холм Ω-') + 1)).toEqual(['Холм', 'Ω-2']);
  });

  it('cuts a word wider than the line into pieces that fit, at least one letter each', () => {
    const { doc } = newDoc();
    const lines = layoutRuns(doc, 'plex', 'Ширококрылова-Łęczyckowska', 30);
    expect(lines.map((l) => l.pieces.map((p) => p.text).join('')).join('')).toBe('Ширококрылова-Łęczyckowska');
    for (const l of lines) expect(l.width).toBeLessThanOrEqual(30);
    expect(layoutRuns(doc, 'plex', 'Ж', 1)).toHaveLength(1);
  });

  it('measures exactly the height writeRuns takes, for mixed and single-script text, in both faces', () => {
    const { doc } = newDoc();
    for (const face of ['plex', 'plex-semi'] as const) {
      for (const text of [MIXED, 'Ярослава Рифовна-Карбонатова Ярослава', 'Kestrel Knoll and Marrow Bank over the Tessel shelf', 'Łąka\nХолм\n\nΩρα']) {
        for (const width of WIDTHS) {
          doc.addPage();
          doc.font(face).fontSize(9);
          const predicted = heightOfRuns(doc, face, text, { width });
          const y0 = doc.y;
          writeRuns(doc, face, text, { x: 30, y: y0 }, { width });
          expect(doc.y - y0, `${face} ${width} ${text}`).toBeCloseTo(predicted, 6);
          expect(doc.x).toBe(30);
        }
      }
    }
  });

  it('keeps every word whole in the PDF at every width (pdftotext)', async () => {
    // no hyphen at a line's end here: pdftotext joins a word hyphenated over two lines
    const text = MIXED.replace('Ωμέγα-Łęg', 'Ωμέγα Łęg');
    const { doc, ended } = newDoc();
    for (const width of WIDTHS) {
      writeRuns(doc, 'plex', text, { x: 30, y: 30 }, { width });
      doc.addPage();
    }
    doc.end();
    const file = path.join(scratch, 'words.pdf');
    fs.writeFileSync(file, await ended);
    const pages = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).split('\f').filter((p) => p.trim());
    expect(pages).toHaveLength(WIDTHS.length);
    for (const page of pages) expect(page.trim().split(/\s+/).join(' ')).toBe(text);
  });
});

describe('fonts shared between documents of one thread', () => {
  /** The PDF of `text` written in `face` in a new document, and the glyph count of each embedded subset (its /W widths array). */
  async function pdfOf(text: string, face: 'plex' | 'plex-semi' = 'plex') {
    const { doc, ended } = newDoc();
    writeRuns(doc, face, text, { x: 30, y: 30 }, { width: 300 });
    doc.end();
    const bytes = await ended;
    const file = path.join(scratch, `shared-${Math.random().toString(36).slice(2)}.pdf`);
    fs.writeFileSync(file, bytes);
    const widths = [...bytes.toString('latin1').matchAll(/\/W \[0 \[([^\]]*)\]\]/g)].map((m) => m[1].trim().split(/\s+/).length);
    // pdffonts: two header lines, then one line per font, its name first
    const fonts = execFileSync('pdffonts', [file], { encoding: 'utf8' }).trim().split('\n').slice(2).map((l) => l.split(/\s+/)[0]);
    return { text: execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).trim(), widths, fonts };
  }

  it('shapes a word once per thread, and each document still embeds only the glyphs it uses', async () => {
    const a = await pdfOf('Kestrel Knoll, Łąka and Holm over the Tessel shelf');
    const shaped = shapedWordCount('plex', 'latin');
    expect(shaped).toBeGreaterThan(0);
    // the same words again in a new document: none shaped again
    const again = await pdfOf('Kestrel Knoll over the Tessel shelf');
    expect(shapedWordCount('plex', 'latin')).toBe(shaped);
    expect(again.text).toBe('Kestrel Knoll over the Tessel shelf');
    expect(a.text).toBe('Kestrel Knoll, Łąka and Holm over the Tessel shelf');
    // a document after them embeds one Latin subset of its own 9 characters (M a r o w B n k and the space) plus .notdef,
    // not the glyphs the documents before it used
    const b = await pdfOf('Marrow Bank');
    expect(b.text).toBe('Marrow Bank');
    expect(b.widths).toEqual([10]);
    // the first document embedded its Latin and its Latin Extended subsets
    expect(a.widths).toHaveLength(2);
  });

  it('keeps the two weights apart: each document embeds the weight it wrote in (pdffonts)', async () => {
    const semi = await pdfOf('Marrow Bank', 'plex-semi');
    const regular = await pdfOf('Marrow Bank', 'plex');
    expect(semi.text).toBe('Marrow Bank');
    expect(regular.text).toBe('Marrow Bank');
    expect(semi.fonts).toHaveLength(1);
    expect(regular.fonts).toHaveLength(1);
    // subset names are "ABCDEF+<PostScript name>": IBM Plex Sans SemiBold and Regular
    expect(semi.fonts[0]).toMatch(/^[A-Z]{6}\+IBMPlexSans-?SemiBold/i);
    expect(regular.fonts[0]).not.toMatch(/SemiBold/i);
    expect(shapedWordCount('plex-semi', 'latin')).toBeGreaterThan(0);
  });
});
