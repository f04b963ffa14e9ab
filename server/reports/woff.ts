/**
 * WOFF 1.0 → plain OpenType (sfnt) bytes, decompressed once per process with
 * node's zlib. pdfkit opens the font it is given for every new document; a
 * WOFF file then has each table inflated again by fontkit's pure-JavaScript
 * inflater (measured at a tenth of a report's PDF time), a plain sfnt is read
 * as is.
 *
 * Format: W3C, "WOFF File Format 1.0" (Recommendation, 13 December 2012),
 * sections 3–5: a 44-byte header ('wOFF', flavor, length, numTables,
 * reserved, totalSfntSize, …), a 20-byte directory entry per table (tag,
 * offset, compLength, origLength, origChecksum), each table zlib-compressed
 * when compLength < origLength. The sfnt is rebuilt per the OpenType
 * specification ("Organization of an OpenType Font": offset table, 16-byte
 * table records sorted by tag, tables on 4-byte boundaries).
 */
import fs from 'node:fs';
import zlib from 'node:zlib';

export class WoffError extends Error {}

/** OpenType table checksum: the sum of the table's big-endian uint32 words (zero-padded), modulo 2³². */
export function tableChecksum(data: Buffer): number {
  let sum = 0;
  const whole = data.length & ~3;
  for (let i = 0; i < whole; i += 4) sum = (sum + data.readUInt32BE(i)) >>> 0;
  if (whole < data.length) {
    const tail = Buffer.alloc(4);
    data.copy(tail, 0, whole);
    sum = (sum + tail.readUInt32BE(0)) >>> 0;
  }
  return sum;
}

export interface WoffTable {
  tag: string;
  data: Buffer;
  /** The checksum the WOFF file carries for the original table. */
  origChecksum: number;
}

/** The tables of a WOFF 1.0 file, decompressed. */
export function woffTables(woff: Buffer): { flavor: number; totalSfntSize: number; tables: WoffTable[] } {
  if (woff.length < 44 || woff.toString('latin1', 0, 4) !== 'wOFF') throw new WoffError('not a WOFF 1.0 file (no wOFF signature)');
  const flavor = woff.readUInt32BE(4);
  if (woff.readUInt32BE(8) !== woff.length) throw new WoffError('WOFF header length does not match the file');
  const numTables = woff.readUInt16BE(12);
  const totalSfntSize = woff.readUInt32BE(16);
  const tables: WoffTable[] = [];
  for (let i = 0; i < numTables; i++) {
    const at = 44 + 20 * i;
    const tag = woff.toString('latin1', at, at + 4);
    const offset = woff.readUInt32BE(at + 4);
    const compLength = woff.readUInt32BE(at + 8);
    const origLength = woff.readUInt32BE(at + 12);
    const origChecksum = woff.readUInt32BE(at + 16);
    if (offset + compLength > woff.length) throw new WoffError(`table ${tag} runs past the end of the file`);
    const raw = woff.subarray(offset, offset + compLength);
    const data = compLength < origLength ? zlib.inflateSync(raw) : Buffer.from(raw);
    if (data.length !== origLength) throw new WoffError(`table ${tag}: ${data.length} bytes after inflating, the directory says ${origLength}`);
    tables.push({ tag, data, origChecksum });
  }
  return { flavor, totalSfntSize, tables };
}

/** The plain OpenType font inside a WOFF 1.0 file. */
export function woffToSfnt(woff: Buffer): Buffer {
  const { flavor, tables } = woffTables(woff);
  const sorted = [...tables].sort((a, b) => (a.tag < b.tag ? -1 : a.tag > b.tag ? 1 : 0));
  const n = sorted.length;
  const entrySelector = Math.floor(Math.log2(n));
  const searchRange = 2 ** entrySelector * 16;
  const pad4 = (x: number) => (x + 3) & ~3;
  let size = 12 + 16 * n;
  for (const t of sorted) size += pad4(t.data.length);
  const out = Buffer.alloc(size);
  out.writeUInt32BE(flavor, 0);
  out.writeUInt16BE(n, 4);
  out.writeUInt16BE(searchRange, 6);
  out.writeUInt16BE(entrySelector, 8);
  out.writeUInt16BE(n * 16 - searchRange, 10);
  let offset = 12 + 16 * n;
  sorted.forEach((t, i) => {
    const rec = 12 + 16 * i;
    out.write(t.tag, rec, 4, 'latin1');
    out.writeUInt32BE(t.origChecksum, rec + 4);
    out.writeUInt32BE(offset, rec + 8);
    out.writeUInt32BE(t.data.length, rec + 12);
    t.data.copy(out, offset);
    offset += pad4(t.data.length);
  });
  return out;
}

const cache = new Map<string, Buffer>();

/** The sfnt bytes of a WOFF font file, read and decompressed once per process (per worker thread). */
export function sfntOfWoffFile(file: string): Buffer {
  let b = cache.get(file);
  if (!b) cache.set(file, (b = woffToSfnt(fs.readFileSync(file))));
  return b;
}
