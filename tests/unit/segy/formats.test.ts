import { describe, expect, it } from 'vitest';
import { FORMAT_CODES, SAMPLE_FORMATS, decodeSamples, decodeSamplesF32, ibmToNumber } from '../../../server/segy/formats';
import { toIbm } from '../../helpers/segy-writer';

describe('IBM System/360 single float', () => {
  // Check values: references.md, from IBM System/360 Principles of Operation ("Floating-Point Arithmetic").
  it.each([
    [0x41100000, 1.0],
    [0x40800000, 0.5],
    [0xc276a000, -118.625],
    [0x42640000, 100.0],
    [0x00000000, 0],
  ])('0x%s decodes to %s', (word, value) => {
    expect(ibmToNumber(word)).toBe(value);
  });

  it('keeps the full 24-bit fraction (exact in float64) and the sign of large and small values', () => {
    // 0x46FFFFFF = (2^24 − 1) / 2^24 · 16^6, computed by hand from the formula.
    expect(ibmToNumber(0x46ffffff)).toBe(16777215);
    expect(ibmToNumber(0xbf100000)).toBe(-(16 ** -1) / 16); // F = 1/16, E = 63 → 1/16 · 16^-1
    expect(ibmToNumber(0x7fffffff)).toBe((1 - 2 ** -24) * 16 ** 63);
  });

  it('round-trips values through the independent test encoder', () => {
    for (const v of [1, -1, 0.1, -3.75e-5, 123456.5, 7.2e20]) {
      const back = ibmToNumber(toIbm(v));
      expect(Math.abs(back - v)).toBeLessThanOrEqual(Math.abs(v) * 2 ** -20); // ≥ 21 significant bits after hex normalisation
    }
  });
});

describe('sample decoding', () => {
  const be = (fill: (b: Buffer) => void, n: number) => { const b = Buffer.alloc(n); fill(b); return b; };
  it('reads two-byte and one-byte unsigned and signed formats in both byte orders', () => {
    expect([...decodeSamples(be((b) => { b.writeUInt16BE(65535, 0); b.writeUInt16BE(2, 2); }, 4), 11, 2, false)]).toEqual([65535, 2]);
    expect([...decodeSamples(be((b) => { b.writeInt16LE(-2, 0); b.writeInt16LE(300, 2); }, 4), 3, 2, true)]).toEqual([-2, 300]);
    expect([...decodeSamples(Buffer.from([0xff, 0x7f]), 8, 2, false)]).toEqual([-1, 127]);
    expect([...decodeSamples(Buffer.from([0xff, 0x7f]), 16, 2, false)]).toEqual([255, 127]);
  });
  it('reads 3-byte integers, float64 and 8-byte integers', () => {
    expect([...decodeSamples(Buffer.from([0xff, 0xff, 0xfe, 0x00, 0x01, 0x00]), 7, 2, false)]).toEqual([-2, 256]);
    expect([...decodeSamples(Buffer.from([0xff, 0xff, 0xfe]), 15, 1, false)]).toEqual([16777214]);
    expect([...decodeSamples(be((b) => b.writeDoubleBE(Math.PI, 0), 8), 6, 1, false)]).toEqual([Math.PI]);
    expect([...decodeSamples(be((b) => b.writeBigInt64BE(-5n, 0), 8), 9, 1, false)]).toEqual([-5]);
    expect([...decodeSamples(be((b) => b.writeBigUInt64LE(2n ** 40n, 0), 8), 12, 1, true)]).toEqual([2 ** 40]);
  });
  it('decodes to float32 as rounding the float64 decoding once, in every format and both byte orders', () => {
    // random bytes (NaNs and infinities included), an odd start offset, and a reused output longer than needed
    let seed = 7;
    const rand = () => ((seed = (seed * 1103515245 + 12345) >>> 0) >>> 24);
    const out = new Float32Array(600);
    let compared = 0;
    for (const format of FORMAT_CODES) {
      for (const little of [false, true]) {
        const n = 500;
        const raw = Buffer.alloc(1 + n * SAMPLE_FORMATS[format].bytes);
        for (let i = 0; i < raw.length; i++) raw[i] = rand();
        const bytes = () => Buffer.from(raw).subarray(1); // a fresh copy each time: both decoders may swap bytes in place
        const want = Array.from(Float32Array.from(decodeSamples(bytes(), format, n, little)));
        const got = decodeSamplesF32(bytes(), format, n, little, out);
        expect(got.length).toBe(n);
        expect(got.buffer).toBe(out.buffer);
        expect([format, little, Array.from(got)]).toEqual([format, little, want]);
        compared += n;
      }
    }
    expect(compared).toBe(FORMAT_CODES.length * 2 * 500);
    expect(() => decodeSamplesF32(Buffer.alloc(40), 5, 10, false, new Float32Array(9))).toThrow(RangeError);
  });
  it('does not depend on the alignment of the bytes it is given', () => {
    const b = Buffer.alloc(9);
    b.writeFloatBE(1.5, 1); b.writeFloatBE(-2.25, 5);
    expect([...decodeSamples(b.subarray(1), 5, 2, false)]).toEqual([1.5, -2.25]);
  });
});
