/**
 * SEG-Y data sample formats (binary header bytes 3225–3226). Codes and sizes
 * from SEG-Y revision 1 (SEG, 2002) and revision 2.0 (SEG, 2017), table of
 * data sample format codes. Code 4 (obsolete fixed point with gain) is refused.
 */

export interface SampleFormat {
  code: number;
  bytes: number;
  name: string;
  /** Revision that defines it. */
  rev: 0 | 1 | 2;
}

export const SAMPLE_FORMATS: Readonly<Record<number, SampleFormat>> = {
  1: { code: 1, bytes: 4, name: '4-byte IBM floating point', rev: 0 },
  2: { code: 2, bytes: 4, name: '4-byte two\'s complement integer', rev: 0 },
  3: { code: 3, bytes: 2, name: '2-byte two\'s complement integer', rev: 0 },
  5: { code: 5, bytes: 4, name: '4-byte IEEE floating point', rev: 1 },
  6: { code: 6, bytes: 8, name: '8-byte IEEE floating point', rev: 2 },
  7: { code: 7, bytes: 3, name: '3-byte two\'s complement integer', rev: 2 },
  8: { code: 8, bytes: 1, name: '1-byte two\'s complement integer', rev: 1 },
  9: { code: 9, bytes: 8, name: '8-byte two\'s complement integer', rev: 2 },
  10: { code: 10, bytes: 4, name: '4-byte unsigned integer', rev: 2 },
  11: { code: 11, bytes: 2, name: '2-byte unsigned integer', rev: 2 },
  12: { code: 12, bytes: 8, name: '8-byte unsigned integer', rev: 2 },
  15: { code: 15, bytes: 3, name: '3-byte unsigned integer', rev: 2 },
  16: { code: 16, bytes: 1, name: '1-byte unsigned integer', rev: 2 },
};

export const FORMAT_CODES = Object.keys(SAMPLE_FORMATS).map(Number);

/**
 * IBM System/360 single-precision hexadecimal float to a JavaScript number:
 * `(−1)^s · (F / 2^24) · 16^(E − 64)` with s = bit 31, E = bits 30–24,
 * F = bits 23–0 (IBM System/360 Principles of Operation, "Floating-Point
 * Arithmetic"; references.md). Computed exactly in float64 (24-bit fraction,
 * power-of-two scale within float64's range), so no precision is lost.
 */
export function ibmToNumber(word: number): number {
  const fraction = word & 0x00ffffff;
  if (fraction === 0) return 0;
  const exponent = (word >>> 24) & 0x7f;
  const sign = word >>> 31 ? -1 : 1;
  return sign * fraction * 2 ** (4 * (exponent - 64) - 24);
}

/**
 * Decode `count` samples of `format` from `bytes` (which this may byte-swap in
 * place) into float64. Every format is exact in float64 except 8-byte
 * integers beyond ±2^53.
 */
export function decodeSamples(bytes: Buffer, format: number, count: number, little: boolean): Float64Array {
  return decodeInto(bytes, format, count, little, new Float64Array(count));
}

/**
 * Decode `count` samples into `out` as float32 (the stored form), each value
 * rounded once from the exact one (8-byte integers round to float64 first, as
 * in `decodeSamples`): the same numbers as `Float32Array.from(decodeSamples(...))`,
 * without the float64 array in between. `bytes` may be byte-swapped in place.
 */
export function decodeSamplesF32(bytes: Buffer, format: number, count: number, little: boolean, out: Float32Array): Float32Array {
  if (out.length < count) throw new RangeError(`decodeSamplesF32: room for ${out.length} samples, ${count} asked`);
  return decodeInto(bytes, format, count, little, out.length === count ? out : out.subarray(0, count));
}

/** The decoding itself, into `out` (`count` long): each value is converted once, to the array's type. */
function decodeInto<T extends Float64Array | Float32Array>(bytes: Buffer, format: number, count: number, little: boolean, out: T): T {
  const native = little; // this server runs on little-endian hosts (x86, arm64); asserted below
  const aligned = (n: number) => (bytes.byteOffset % n === 0 ? bytes : Buffer.from(bytes));
  switch (format) {
    case 1: {
      const b = aligned(4);
      if (!native) b.swap32();
      const u = new Uint32Array(b.buffer, b.byteOffset, count);
      for (let i = 0; i < count; i++) out[i] = ibmToNumber(u[i]);
      return out;
    }
    case 2: case 5: case 10: {
      const b = aligned(4);
      if (!native) b.swap32();
      const v = format === 2 ? new Int32Array(b.buffer, b.byteOffset, count) : format === 5 ? new Float32Array(b.buffer, b.byteOffset, count) : new Uint32Array(b.buffer, b.byteOffset, count);
      out.set(v);
      return out;
    }
    case 3: case 11: {
      const b = aligned(2);
      if (!native) b.swap16();
      out.set(format === 3 ? new Int16Array(b.buffer, b.byteOffset, count) : new Uint16Array(b.buffer, b.byteOffset, count));
      return out;
    }
    case 6: case 9: case 12: {
      const b = aligned(8);
      if (!native) b.swap64();
      if (format === 6) out.set(new Float64Array(b.buffer, b.byteOffset, count));
      else {
        const v = format === 9 ? new BigInt64Array(b.buffer, b.byteOffset, count) : new BigUint64Array(b.buffer, b.byteOffset, count);
        for (let i = 0; i < count; i++) out[i] = Number(v[i]);
      }
      return out;
    }
    case 7: case 15: {
      for (let i = 0; i < count; i++) {
        const o = i * 3;
        const u = little ? bytes[o] | (bytes[o + 1] << 8) | (bytes[o + 2] << 16) : (bytes[o] << 16) | (bytes[o + 1] << 8) | bytes[o + 2];
        out[i] = format === 7 && u & 0x800000 ? u - 0x1000000 : u;
      }
      return out;
    }
    case 8: out.set(new Int8Array(bytes.buffer, bytes.byteOffset, count)); return out;
    case 16: out.set(new Uint8Array(bytes.buffer, bytes.byteOffset, count)); return out;
  }
  throw new Error(`format ${format} cannot be decoded`);
}

if (new Uint8Array(new Uint16Array([1]).buffer)[0] !== 1) throw new Error('SEG-Y reader assumes a little-endian host');
