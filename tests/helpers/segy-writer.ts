/**
 * A small SEG-Y writer for tests, written apart from the reader: its own byte
 * positions (SEG-Y rev 1, SEG 2002; rev 2.0, SEG 2017; references.md), its
 * own IBM encoder and a letters/digits EBCDIC (code page 037) encoder, so a
 * file it writes is an independent check of server/segy.
 */

export type WriterFormat = 1 | 2 | 3 | 5 | 6 | 8 | 10 | 11 | 16;
const SIZE: Record<WriterFormat, number> = { 1: 4, 2: 4, 3: 2, 5: 4, 6: 8, 8: 1, 10: 4, 11: 2, 16: 1 };

/** Value at a 1-based byte position: [position, bytes (1, 2, 4 or 8), value]; 8 means a uint64. */
export type Field = [number, 1 | 2 | 4 | 8, number];

export interface WriterTrace {
  /** Extra trace header fields (1-based positions within the 240-byte header). */
  fields?: Field[];
  samples: ArrayLike<number>;
}

export interface WriterInput {
  format: WriterFormat;
  little?: boolean;
  /** Up to 40 lines of 80 characters. */
  text?: string;
  ebcdic?: boolean;
  sampleInterval: number;
  samplesPerTrace: number;
  /** Binary header fields beyond interval, samples and format (file positions 3201–3600). */
  binary?: Field[];
  extendedText?: string[];
  traces: WriterTrace[];
}

/** IBM System/360 single float from a number (round to nearest on the 24-bit fraction). */
export function toIbm(v: number): number {
  if (v === 0 || !Number.isFinite(v)) return 0;
  const sign = v < 0 ? 0x80000000 : 0;
  let a = Math.abs(v);
  let e = 64;
  while (a >= 1) { a /= 16; e++; }
  while (a < 1 / 16) { a *= 16; e--; }
  let f = Math.round(a * 2 ** 24);
  if (f === 2 ** 24) { f = 2 ** 20; e++; }
  return (sign | (e << 24) | f) >>> 0;
}

/** cp037 code for A–Z, a–z, 0–9, space and a few signs. */
function ebcdicByte(c: string): number {
  const code = c.charCodeAt(0);
  if (c >= 'A' && c <= 'I') return 0xc1 + code - 65;
  if (c >= 'J' && c <= 'R') return 0xd1 + code - 74;
  if (c >= 'S' && c <= 'Z') return 0xe2 + code - 83;
  if (c >= 'a' && c <= 'i') return 0x81 + code - 97;
  if (c >= 'j' && c <= 'r') return 0x91 + code - 106;
  if (c >= 's' && c <= 'z') return 0xa2 + code - 115;
  if (c >= '0' && c <= '9') return 0xf0 + code - 48;
  const signs: Record<string, number> = { ' ': 0x40, '.': 0x4b, '(': 0x4d, ')': 0x5d, '-': 0x60, '/': 0x61, ',': 0x6b, ':': 0x7a, '=': 0x7e };
  return signs[c] ?? 0x40;
}

function textBlock(text: string, ebcdic: boolean): Buffer {
  const b = Buffer.alloc(3200, ebcdic ? 0x40 : 0x20);
  const s = text.slice(0, 3200);
  for (let i = 0; i < s.length; i++) b[i] = ebcdic ? ebcdicByte(s[i]) : s.charCodeAt(i) & 0x7f;
  return b;
}

function put(b: Buffer, at: number, size: number, v: number, little: boolean) {
  if (size === 1) b.writeUInt8(v & 0xff, at);
  else if (size === 2) { if (little) b.writeUInt16LE(v & 0xffff, at); else b.writeUInt16BE(v & 0xffff, at); }
  else if (size === 4) { if (little) b.writeUInt32LE(v >>> 0, at); else b.writeUInt32BE(v >>> 0, at); }
  else { if (little) b.writeBigUInt64LE(BigInt(v), at); else b.writeBigUInt64BE(BigInt(v), at); }
}

function sampleBytes(format: WriterFormat, samples: ArrayLike<number>, little: boolean): Buffer {
  const n = samples.length;
  const b = Buffer.alloc(n * SIZE[format]);
  for (let i = 0; i < n; i++) {
    const v = samples[i];
    switch (format) {
      case 1: put(b, 4 * i, 4, toIbm(v), little); break;
      case 2: if (little) b.writeInt32LE(v, 4 * i); else b.writeInt32BE(v, 4 * i); break;
      case 3: if (little) b.writeInt16LE(v, 2 * i); else b.writeInt16BE(v, 2 * i); break;
      case 5: if (little) b.writeFloatLE(v, 4 * i); else b.writeFloatBE(v, 4 * i); break;
      case 6: if (little) b.writeDoubleLE(v, 8 * i); else b.writeDoubleBE(v, 8 * i); break;
      case 8: b.writeInt8(v, i); break;
      case 10: if (little) b.writeUInt32LE(v, 4 * i); else b.writeUInt32BE(v, 4 * i); break;
      case 11: if (little) b.writeUInt16LE(v, 2 * i); else b.writeUInt16BE(v, 2 * i); break;
      case 16: b.writeUInt8(v, i); break;
    }
  }
  return b;
}

/** The 3600-byte file header plus extended textual headers. */
export function segyHead(input: Omit<WriterInput, 'traces'>): Buffer {
  const little = input.little ?? false;
  const bin = Buffer.alloc(400);
  const set = (pos: number, size: 1 | 2 | 4 | 8, v: number) => put(bin, pos - 3201, size, v, little);
  set(3217, 2, input.sampleInterval);
  set(3221, 2, input.samplesPerTrace);
  set(3225, 2, input.format);
  for (const [pos, size, v] of input.binary ?? []) set(pos, size, v);
  return Buffer.concat([textBlock(input.text ?? 'C 1 TESSEL BASIN TB-2024 TEST LINE', input.ebcdic ?? true), bin, ...(input.extendedText ?? []).map((t) => textBlock(t, input.ebcdic ?? true))]);
}

/** One trace: 240-byte header (samples and interval filled in) and samples. */
export function segyTrace(input: Pick<WriterInput, 'format' | 'little' | 'sampleInterval'>, t: WriterTrace): Buffer {
  const little = input.little ?? false;
  const h = Buffer.alloc(240);
  put(h, 114, 2, t.samples.length, little);
  put(h, 116, 2, input.sampleInterval, little);
  for (const [pos, size, v] of t.fields ?? []) put(h, pos - 1, size, v, little);
  return Buffer.concat([h, sampleBytes(input.format, t.samples, little)]);
}

export function writeSegy(input: WriterInput): Buffer {
  return Buffer.concat([segyHead(input), ...input.traces.map((t) => segyTrace(input, t))]);
}

/** Chunks of a buffer, as a stream would deliver them. */
export async function* chunked(b: Uint8Array, size = 65536): AsyncGenerator<Uint8Array> {
  for (let i = 0; i < b.length; i += size) yield b.subarray(i, Math.min(b.length, i + size));
}
