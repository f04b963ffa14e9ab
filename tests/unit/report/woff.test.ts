/**
 * WOFF 1.0 → sfnt (server/reports/woff.ts) on the app's own IBM Plex Sans
 * files. Independent checks:
 * - every decompressed table's OpenType checksum equals the `origChecksum`
 *   the font's producer wrote into the WOFF directory (W3C WOFF 1.0, §5;
 *   checksum per the OpenType spec, "Calculating checksums"; for `head` the
 *   sum is taken with checkSumAdjustment set to zero);
 * - the rebuilt file has the WOFF header's `totalSfntSize`;
 * - fontkit opening the WOFF itself (its own pure-JavaScript inflater, not
 *   node's zlib) sees the same glyphs, advances and outlines as in the sfnt.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import * as fontkit from 'fontkit';
import { tableChecksum, woffTables, woffToSfnt, WoffError } from '../../../server/reports/woff';

const DIR = path.resolve('node_modules/@fontsource/ibm-plex-sans/files');
const FILES = ['ibm-plex-sans-latin-400-normal.woff', 'ibm-plex-sans-latin-600-normal.woff', 'ibm-plex-sans-cyrillic-400-normal.woff', 'ibm-plex-sans-greek-400-normal.woff'].filter((f) =>
  fs.existsSync(path.join(DIR, f)),
);

describe('WOFF 1.0 to sfnt', () => {
  it.each(FILES)('%s: table checksums match the WOFF directory and the size matches totalSfntSize', (file) => {
    const woff = fs.readFileSync(path.join(DIR, file));
    const { tables, totalSfntSize } = woffTables(woff);
    expect(tables.length).toBeGreaterThan(5);
    for (const t of tables) {
      const data = Buffer.from(t.data);
      if (t.tag === 'head') data.writeUInt32BE(0, 8); // checkSumAdjustment
      expect(tableChecksum(data), t.tag).toBe(t.origChecksum);
    }
    expect(woffToSfnt(woff).length).toBe(totalSfntSize);
  });

  it.each(FILES)('%s: fontkit reads the same glyphs from the sfnt as from the WOFF', (file) => {
    const woff = fs.readFileSync(path.join(DIR, file));
    const a = fontkit.create(woff) as fontkit.Font;
    const b = fontkit.create(woffToSfnt(woff)) as fontkit.Font;
    expect(b.numGlyphs).toBe(a.numGlyphs);
    expect(b.unitsPerEm).toBe(a.unitsPerEm);
    expect(b.characterSet).toEqual(a.characterSet);
    let compared = 0;
    for (const cp of a.characterSet.slice(0, 400)) {
      const ga = a.glyphForCodePoint(cp);
      const gb = b.glyphForCodePoint(cp);
      expect(gb.id).toBe(ga.id);
      let woffAdvance: number;
      try {
        woffAdvance = ga.advanceWidth;
      } catch (e) {
        // fontkit's WOFF reader runs past the table on an empty glyph stored last in glyf (space, no-break
        // space in the subset files); from the sfnt the same glyph reads as empty
        expect(e).toBeInstanceOf(RangeError);
        expect(gb.path.commands).toEqual([]);
        continue;
      }
      expect(gb.advanceWidth).toBe(woffAdvance);
      expect(gb.path.toSVG()).toBe(ga.path.toSVG());
      compared++;
    }
    expect(compared).toBeGreaterThan(Math.min(50, a.characterSet.length - 5));
  });

  it('refuses bytes that are not WOFF 1.0, and a truncated file', () => {
    expect(() => woffToSfnt(Buffer.from('OTTO and more bytes than forty-four of them ....'))).toThrow(WoffError);
    const woff = fs.readFileSync(path.join(DIR, FILES[0]));
    expect(() => woffToSfnt(woff.subarray(0, woff.length - 100))).toThrow(/length does not match/);
  });

  it('checksum of a known word sequence (OpenType: sum of big-endian uint32, tail zero-padded)', () => {
    // 0x00010002 + 0x03000000 (the 3 is padded with zeros) = 0x03010002
    expect(tableChecksum(Buffer.from([0, 1, 0, 2, 3]))).toBe(0x03010002);
    // wraps modulo 2^32
    expect(tableChecksum(Buffer.from([0xff, 0xff, 0xff, 0xff, 0, 0, 0, 2]))).toBe(1);
  });
});
