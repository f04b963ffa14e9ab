/**
 * A SEG-Y stream (an upload in flight) into Cayline's stored form, in one
 * pass, never holding the file:
 *
 * - `amplitudes.f32`: float32 little-endian, trace-major (trace t's sample s at
 *   byte 4·(t·ns + s)): one read per trace column, one small read per trace
 *   of a window, one read per trace of a render strip.
 * - `headers.bin`: every trace's 240 header bytes as in the file (byte order
 *   as the file's), for the header viewer's pages.
 * - `geometry.f64`: five float64 per trace: inline, crossline, CDP number and
 *   the position x, y used for the self-calibration (scaled coordinates, or
 *   CDP number × spacing along x).
 *
 * Memory bound: the reader's (largest unit + 2 input chunks, see reader.ts),
 * plus one decoded trace (float32, reused from trace to trace), plus two
 * 1 MiB write buffers, plus 80 bytes per trace of geometry (GeometryCollector:
 * CDP, inline, crossline and three coordinate pairs as float64). With 64 KiB
 * chunks and 1,500-sample traces that is about 2.2 MiB + 80 B × traces
 * (≈ 82 MiB for a million traces).
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import { SegyReader, type SegyFileHeader } from './reader';
import { GeometryCollector, summariseGeometry, type GeometrySummary } from './geometry';
import { SegyError } from './errors';
import type { OverridableField } from './fields';
import type { SegyWarning } from '../../shared/schemas/segy';

export const AMPLITUDES_FILE = 'amplitudes.f32';
export const HEADERS_FILE = 'headers.bin';
export const GEOMETRY_FILE = 'geometry.f64';
export const GEOMETRY_STRIDE = 5;

const WRITE_BUFFER = 1 << 20;

/** Appends bytes to a file through one fixed buffer. */
class BufferedWriter {
  private buf = Buffer.allocUnsafe(WRITE_BUFFER);
  private used = 0;
  private constructor(private readonly fh: fsp.FileHandle) {}
  static async open(file: string) {
    return new BufferedWriter(await fsp.open(file, 'w'));
  }
  async write(bytes: Uint8Array) {
    let at = 0;
    while (at < bytes.length) {
      const k = Math.min(bytes.length - at, this.buf.length - this.used);
      this.buf.set(bytes.subarray(at, at + k), this.used);
      this.used += k;
      at += k;
      if (this.used === this.buf.length) await this.flush();
    }
  }
  private async flush() {
    let off = 0;
    while (off < this.used) off += (await this.fh.write(this.buf, off, this.used - off)).bytesWritten;
    this.used = 0;
  }
  async close() {
    try {
      await this.flush();
    } finally {
      await this.fh.close();
    }
  }
}

export interface IngestOptions {
  fileSize?: number;
  overrides?: Partial<Record<OverridableField, number>>;
  cdpSpacing?: number;
  domain?: 'auto' | 'time' | 'depth';
}

export interface IngestResult {
  header: SegyFileHeader;
  summary: GeometrySummary;
  traces: number;
  samplesPerTrace: number;
  warnings: SegyWarning[];
  /** Peak bytes the reader held, and its bound for the chunks seen. */
  maxBufferedBytes: number;
  memoryBound: number;
}

interface Counter { count: number; first: number; detail: string }

/** Read `source` into `dir` (which must exist); throws SegyError for a file Cayline refuses. */
export async function ingestSegy(source: AsyncIterable<Uint8Array>, dir: string, opts: IngestOptions = {}): Promise<IngestResult> {
  const reader = new SegyReader({ fileSize: opts.fileSize, overrides: opts.overrides });
  const amps = await BufferedWriter.open(path.join(dir, AMPLITUDES_FILE));
  const heads = await BufferedWriter.open(path.join(dir, HEADERS_FILE));
  const g = new GeometryCollector();
  const interval: Counter = { count: 0, first: 0, detail: '' };
  const sampleCount: Counter = { count: 0, first: 0, detail: '' };
  let ns = 0;
  try {
    for await (const t of reader.readFloat32(source)) {
      const h = reader.header!;
      if (t.index === 0) ns = t.samples.length;
      else if (t.samples.length !== ns) {
        throw new SegyError('segy_unsupported', 'samples', 'trace header bytes 115–116', `trace ${t.index + 1} has ${t.samples.length} samples and the first trace ${ns}; a section needs traces of one length`, { trace: t.index + 1 });
      }
      const th = t.header;
      if (th.sampleInterval !== 0 && h.binary.sampleInterval !== 0 && th.sampleInterval !== h.binary.sampleInterval) {
        if (interval.count++ === 0) { interval.first = t.index + 1; interval.detail = `${th.sampleInterval} µs against ${h.binary.sampleInterval} µs`; }
      }
      if (h.fixedLength && th.samples !== 0 && th.samples !== h.samplesPerTrace) {
        if (sampleCount.count++ === 0) { sampleCount.first = t.index + 1; sampleCount.detail = `${th.samples} against ${h.samplesPerTrace}`; }
      }
      g.add(th);
      await amps.write(new Uint8Array(t.samples.buffer, t.samples.byteOffset, ns * 4));
      await heads.write(t.rawHeader);
    }
  } finally {
    await amps.close();
    await heads.close();
  }
  const header = reader.header;
  if (!header) throw new Error('unreachable: no header after reading');
  const summary = summariseGeometry(header, g, { cdpSpacing: opts.cdpSpacing, domain: opts.domain, overrides: opts.overrides });
  if (!(ns > 0)) throw new SegyError('segy_no_traces', 'samplesPerTrace', 'bytes 3221–3222', 'the file has headers but no traces');

  // positions per trace as the self-calibration used them
  const n = g.count;
  const geo = new Float64Array(n * GEOMETRY_STRIDE);
  const src = summary.positionSource === 'cdpNumber' ? null : g.xy[summary.positionSource];
  let zeroXY = 0;
  let firstZero = 0;
  for (let i = 0; i < n; i++) {
    const o = i * GEOMETRY_STRIDE;
    geo[o] = g.inline[i];
    geo[o + 1] = g.crossline[i];
    geo[o + 2] = g.cdp[i];
    if (src) {
      geo[o + 3] = src[2 * i];
      geo[o + 4] = src[2 * i + 1];
      if (src[2 * i] === 0 && src[2 * i + 1] === 0 && zeroXY++ === 0) firstZero = i + 1;
    } else {
      geo[o + 3] = summary.x[i];
      geo[o + 4] = 0;
    }
  }
  await fsp.writeFile(path.join(dir, GEOMETRY_FILE), new Uint8Array(geo.buffer));

  const warnings: SegyWarning[] = [];
  const pos = opts.overrides ?? {};
  if (summary.dimension === '2d' && n > 1) {
    const dir0 = Math.sign(g.cdp[n - 1] - g.cdp[0]) || 1;
    let bad = 0;
    let first = 0;
    for (let i = 1; i < n; i++) if (Math.sign(g.cdp[i] - g.cdp[i - 1]) !== dir0 && bad++ === 0) first = i + 1;
    if (bad) warnings.push({ code: 'cdp_not_monotonic', field: 'cdp', bytes: 'trace header bytes 21–24', message: `CDP numbers are not monotonic: ${bad} step(s) go the other way or repeat, first at trace ${first}` });
  }
  if (zeroXY) {
    const label = summary.positionSource === 'cdp'
      ? `trace header bytes ${pos.cdpX ?? 181}–${(pos.cdpX ?? 181) + 3} and ${pos.cdpY ?? 185}–${(pos.cdpY ?? 185) + 3}`
      : summary.positionSource === 'source' ? 'trace header bytes 73–80' : 'trace header bytes 81–88';
    warnings.push({ code: 'zero_coordinates', field: summary.positionSource === 'cdp' ? 'cdpX' : `${summary.positionSource}X`, bytes: label, message: `${zeroXY} trace(s) have coordinates (0, 0), first at trace ${firstZero}; the distance along the line jumps there` });
  }
  if (interval.count) warnings.push({ code: 'sample_interval_mismatch', field: 'sampleInterval', bytes: 'trace header bytes 117–118 and bytes 3217–3218', message: `${interval.count} trace(s) state a sample interval other than the binary header's (${interval.detail}, first at trace ${interval.first}); the binary header's is used` });
  if (sampleCount.count) warnings.push({ code: 'sample_count_mismatch', field: 'samples', bytes: 'trace header bytes 115–116 and bytes 3221–3222', message: `${sampleCount.count} trace(s) state a sample count other than the binary header's (${sampleCount.detail}, first at trace ${sampleCount.first}); the binary header's is used` });
  if (header.byteOrderIgnored !== undefined) {
    warnings.push({ code: 'byte_order_ignored', field: 'byteOrder', bytes: 'bytes 3297–3300', message: `bytes 3297–3300 hold 0x${header.byteOrderIgnored.toString(16).padStart(8, '0')}, not a byte order constant; revision ${header.revision.major} leaves them unassigned, so the file was read ${header.littleEndian ? 'little' : 'big'}-endian by its format code` });
  }
  if (header.binary.measurementSystem === 2) warnings.push({ code: 'feet', field: 'measurementSystem', bytes: 'bytes 3255–3256', message: 'lengths are in feet; Cayline converts them to metres (0.3048 m per foot)' });

  return { header, summary, traces: n, samplesPerTrace: ns, warnings, maxBufferedBytes: reader.maxBufferedBytes, memoryBound: reader.memoryBound() };
}
