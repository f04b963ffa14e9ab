/**
 * Where a SEG-Y upload's data sits in the file store and how a section reads
 * it: the traces a section shows (all of a 2D line in file order, or one
 * inline / crossline of a 3D cube sorted by the other number), amplitude
 * windows through ranged reads (`FileStore.get(key, range)`, so any driver
 * serves them), and the render pass that feeds the tile pyramid.
 */
import fs from 'node:fs';
import { setImmediate as yieldToLoop } from 'node:timers/promises';
import type { FileStore } from '../storage/fileStore';
import { AMPLITUDES_FILE, GEOMETRY_FILE, GEOMETRY_STRIDE, HEADERS_FILE } from './ingest';
import { AbsAmplitudeHistogram } from './stats';
import { agcInto, agcWindowSamples, rampIndex, rampLut } from './render';
import type { RenderSettings } from '../../shared/schemas/segy';
import type { StripSource } from '../services/tiles.service';

export const segyKeys = (storageKey: string) => ({
  root: `segy/${storageKey}`,
  amplitudes: `segy/${storageKey}/${AMPLITUDES_FILE}`,
  headers: `segy/${storageKey}/${HEADERS_FILE}`,
  geometry: `segy/${storageKey}/${GEOMETRY_FILE}`,
});

/** The file of a section's trace list (3D extractions; a 2D line shows every trace in order). */
export const selectionKey = (sectionStorageKey: string) => `sections/${sectionStorageKey}/segy-traces.u32`;

export async function readAll(store: FileStore, key: string, range?: { start: number; end: number }): Promise<Buffer> {
  const obj = await store.get(key, range);
  if (!obj) throw new Error(`file store: ${key} is missing`);
  const parts: Buffer[] = [];
  for await (const c of obj.stream) parts.push(c as Buffer);
  return Buffer.concat(parts);
}

/** Float64 view of a little-endian buffer (copied so the view is aligned). */
const f64 = (b: Buffer) => new Float64Array(new Uint8Array(b).buffer);
const f32 = (b: Buffer) => new Float32Array(new Uint8Array(b).buffer);

/** The geometry records (inline, crossline, cdp, x, y per trace). */
export async function readGeometry(store: FileStore, storageKey: string): Promise<Float64Array> {
  return f64(await readAll(store, segyKeys(storageKey).geometry));
}

/** File trace indices of an inline or crossline, sorted by the other number (then file order). */
export function selectTraces(geo: Float64Array, kind: 'inline' | 'crossline', number: number): Uint32Array {
  const n = geo.length / GEOMETRY_STRIDE;
  const k = kind === 'inline' ? 0 : 1;
  const other = 1 - k;
  const out: number[] = [];
  for (let i = 0; i < n; i++) if (geo[i * GEOMETRY_STRIDE + k] === number) out.push(i);
  out.sort((a, b) => geo[a * GEOMETRY_STRIDE + other] - geo[b * GEOMETRY_STRIDE + other] || a - b);
  return Uint32Array.from(out);
}

/** Positions (file units) of the chosen traces, in section order. */
export function positionsOf(geo: Float64Array, traces: Uint32Array | null): Array<[number, number]> {
  const n = traces ? traces.length : geo.length / GEOMETRY_STRIDE;
  const out: Array<[number, number]> = new Array(n);
  for (let i = 0; i < n; i++) {
    const t = traces ? traces[i] : i;
    out[i] = [geo[t * GEOMETRY_STRIDE + 3], geo[t * GEOMETRY_STRIDE + 4]];
  }
  return out;
}

export async function readSelection(store: FileStore, sectionStorageKey: string, selected: boolean): Promise<Uint32Array | null> {
  if (!selected) return null;
  const b = await readAll(store, selectionKey(sectionStorageKey));
  return new Uint32Array(new Uint8Array(b).buffer);
}

/**
 * Amplitudes of traces [trace, trace + traces) and samples [sample, sample +
 * samples) of a section (indices already checked against its size): one
 * ranged read per trace, a few at a time.
 */
export async function readWindow(
  store: FileStore,
  uploadKey: string,
  ns: number,
  selection: Uint32Array | null,
  w: { trace: number; sample: number; traces: number; samples: number },
): Promise<number[][]> {
  const key = segyKeys(uploadKey).amplitudes;
  const rows: number[][] = new Array(w.traces);
  const BATCH = 16;
  for (let b = 0; b < w.traces; b += BATCH) {
    await Promise.all(
      Array.from({ length: Math.min(BATCH, w.traces - b) }, async (_, k) => {
        const i = b + k;
        const t = selection ? selection[w.trace + i] : w.trace + i;
        const start = 4 * (t * ns + w.sample);
        const buf = await readAll(store, key, { start, end: start + 4 * w.samples - 1 });
        if (buf.length !== 4 * w.samples) throw new Error(`amplitudes: short read of trace ${t}`);
        rows[i] = Array.from(f32(buf));
      }),
    );
  }
  return rows;
}

/** Floats in one batch read of consecutive traces (4 MiB). */
const BATCH_FLOATS = 1 << 20;

export interface RenderInput {
  /** Local path of the upload's amplitudes (FileStore.localCopy). */
  amplitudesPath: string;
  ns: number;
  selection: Uint32Array | null;
  /** Traces in the section. */
  width: number;
  settings: RenderSettings;
  /** Sample interval in ms (time data), for the AGC window; null for depth data. */
  intervalMs: number | null;
  onProgress?: (fraction: number) => void;
}

/**
 * Open the amplitudes and give (1) the clip value, from a first pass over the
 * section's samples (after AGC when on) into the |amplitude| histogram, and
 * (2) a strip source that renders rows through the ramp. Close with `close()`.
 * Memory: one batch of consecutive traces (at most 4 MiB, or one trace when
 * a trace is longer), its AGC copy, one strip of 8-bit pixels
 * (width × 512 × channels) and the 2 MiB histogram.
 *
 * Reads: the section's traces that lie next to each other in the file (a 2D
 * line, an inline) are read together, as many as fit the batch, in one
 * positional read per batch — one read per trace and strip was most of a
 * render's time. A crossline's traces are apart in the file and are read
 * one by one.
 */
export async function openRender(input: RenderInput): Promise<{ clip: number; strips: StripSource; close(): Promise<void> }> {
  const { ns, selection, width, settings } = input;
  // Positional reads are synchronous (a few µs each against tens for the promise API);
  // the loops yield to the event loop every YIELD_EVERY traces so the process keeps answering.
  const fd = fs.openSync(input.amplitudesPath, 'r');
  const YIELD_EVERY = 512;
  try {
    const fileTrace = (i: number) => (selection ? selection[i] : i);
    const win = settings.agcMs != null && input.intervalMs ? agcWindowSamples(settings.agcMs, input.intervalMs) : 0;
    const half = win ? (win - 1) >> 1 : 0;
    const batch = new Float32Array(Math.max(BATCH_FLOATS, ns)); // little-endian hosts (x86, arm64), as stored
    const batchBytes = Buffer.from(batch.buffer);
    /** `visit(i, x)` for every column i in order, x = samples [from, to) of its trace. */
    const eachTrace = async (from: number, to: number, visit: (i: number, x: Float32Array) => void) => {
      const n = to - from;
      const maxRun = 1 + Math.floor((batch.length - n) / ns);
      let sinceYield = 0;
      for (let i = 0; i < width; ) {
        const t0 = fileTrace(i);
        let run = 1;
        while (run < maxRun && i + run < width && fileTrace(i + run) === t0 + run) run++;
        const floats = (run - 1) * ns + n;
        const bytesRead = fs.readSync(fd, batchBytes, 0, 4 * floats, 4 * (t0 * ns + from));
        if (bytesRead !== 4 * floats) throw new Error(`amplitudes: short read of traces ${t0}–${t0 + run - 1}`);
        for (let k = 0; k < run; k++) visit(i + k, batch.subarray(k * ns, k * ns + n));
        i += run;
        sinceYield += run;
        if (sinceYield >= YIELD_EVERY && i < width) {
          sinceYield = 0;
          await yieldToLoop();
        }
      }
    };

    // pass 1: the clip value
    const hist = new AbsAmplitudeHistogram();
    const gained = new Float64Array(ns);
    await eachTrace(0, ns, (i, x) => {
      if (win) {
        agcInto(x, win, 0, ns, gained);
        hist.add(gained);
      } else hist.add(x);
      if (i % 256 === 0) input.onProgress?.((0.3 * i) / width);
    });
    let clip = hist.percentile(settings.clipPercentile);
    if (!(clip > 0)) clip = hist.max > 0 ? hist.max : 1;

    // pass 2: strips of rows through the ramp
    const { channels, lut } = rampLut(settings.ramp);
    const seg = new Float64Array(ns);
    const strips: StripSource = {
      width,
      height: ns,
      channels,
      async readStrip(y, rows) {
        const out = Buffer.allocUnsafe(width * rows * channels);
        const a = Math.max(0, y - half);
        const b = Math.min(ns, y + rows + half);
        await eachTrace(a, b, (i, x) => {
          let vals: ArrayLike<number> = x;
          let off = y - a;
          if (win) {
            agcInto(x, win, y - a, y - a + rows, seg);
            vals = seg;
            off = 0;
          }
          // one loop per channel count, so the per-sample work has no branch on it
          if (channels === 1) {
            for (let j = 0, o = i; j < rows; j++, o += width) out[o] = lut[rampIndex(vals[off + j], clip)];
          } else {
            for (let j = 0, o = 3 * i; j < rows; j++, o += 3 * width) {
              const c = 3 * rampIndex(vals[off + j], clip);
              out[o] = lut[c];
              out[o + 1] = lut[c + 1];
              out[o + 2] = lut[c + 2];
            }
          }
        });
        return out;
      },
    };
    return { clip, strips, close: async () => fs.closeSync(fd) };
  } catch (e) {
    fs.closeSync(fd);
    throw e;
  }
}
