/**
 * Runs of one script subset each for the report PDF (server/reports/pdf-fonts.ts).
 * Which subset holds which letters is read from the font files themselves;
 * the expectations below follow Unicode's blocks (Unicode Standard, code
 * charts: Basic Latin, Latin Extended-A, Cyrillic, Greek and Coptic).
 */
import { describe, expect, it } from 'vitest';
import { covers, pdfRuns, pdfText } from '../../../server/reports/pdf-fonts';

describe('pdfRuns', () => {
  it('keeps plain Latin in one run', () => {
    expect(pdfRuns('Kestrel Knoll · TB-11')).toEqual([{ subset: 'latin', text: 'Kestrel Knoll · TB-11' }]);
  });

  it('cuts mixed text into Latin, Latin Extended, Cyrillic and Greek runs, in order, losing no letter', () => {
    const name = 'Łąka Холм Ωρα';
    const runs = pdfRuns(name);
    expect(runs.map((r) => r.text).join('')).toBe(name);
    // Ł (U+0141) and ą (U+0105) are Latin Extended-A; Х, о, л, м Cyrillic; Ω, ρ, α Greek
    expect(runs).toEqual([
      { subset: 'latin-ext', text: 'Łą' },
      { subset: 'latin', text: 'ka ' },
      { subset: 'cyrillic', text: 'Холм' },
      { subset: 'latin', text: ' ' },
      { subset: 'greek', text: 'Ωρα' },
    ]);
  });

  it('each subset covers its own block and not another script', () => {
    expect(covers('cyrillic', 'Ж'.codePointAt(0)!)).toBe(true);
    expect(covers('latin', 'Ж'.codePointAt(0)!)).toBe(false);
    expect(covers('greek', 'λ'.codePointAt(0)!)).toBe(true);
    expect(covers('latin-ext', 'ő'.codePointAt(0)!)).toBe(true);
  });

  it('spells the signs it always spelled, and prints "?" for a character no subset has (CJK)', () => {
    expect(pdfText('VE ≈ 2× · 1.2 × 10⁹ m³')).toBe('VE ~ 2× · 1.2 × 10^9 m³');
    expect(pdfText('tan θ')).toBe('tan theta');
    expect(pdfText('礁 Knoll')).toBe('? Knoll');
  });
});
