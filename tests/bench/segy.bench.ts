/**
 * SEG-Y reading benchmark: a generated file (1 GiB by default: IEEE float
 * big-endian, 1,500 samples a trace, invented TB-2024 line) read by
 * server/segy/reader.ts (float32, as an upload reads) with the geometry collector and the |amplitude|
 * histogram fed, as a ratio to a plain sequential read of the same file
 * (fs.createReadStream, same 1 MiB chunks) in the same run. Then once the
 * whole path of an upload: ingest (reader + float32 amplitudes, raw headers
 * and geometry written to disk, server/segy/ingest.ts) and rendering to the
 * tile pyramid (clip pass, greyscale strips, JPEG tiles:
 * server/segy/section-data.ts + buildPyramidFromStrips), each as a ratio to
 * the plain read, three rounds. Then, for the record, the pyramid alone
 * (the same JPEG tiles and levels from strips already drawn), the share of
 * the total no reader or renderer can take away. Prints the reader's peak
 * buffered bytes against its stated bound and peak RSS.
 *
 *   npx tsx tests/bench/segy.bench.ts [MiB] [format]     (format 5 or 1; default 1024 5)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { GeometryCollector } from '../../server/segy/geometry';
import { SegyReader } from '../../server/segy/reader';
import { AbsAmplitudeHistogram } from '../../server/segy/stats';
import { segyHead, segyTrace } from '../helpers/segy-writer';
import { ingestSegy } from '../../server/segy/ingest';
import { openRender } from '../../server/segy/section-data';
import { buildPyramidFromStrips } from '../../server/services/tiles.service';
import { median } from './stats';

const MIB = Number(process.argv[2] ?? 1024);
const FORMAT = Number(process.argv[3] ?? 5) as 1 | 5;
const NS = 1500;
const CHUNK = 1 << 20;

let peak = 0;
const sampler = setInterval(() => { peak = Math.max(peak, process.memoryUsage().rss); }, 20);

function generate(file: string): number {
  const fd = fs.openSync(file, 'w');
  const spec = { format: FORMAT, sampleInterval: 2000 };
  fs.writeSync(fd, segyHead({ ...spec, samplesPerTrace: NS, text: 'C 1 TESSEL BASIN TB-2024 BENCHMARK LINE' }));
  const perTrace = 240 + 4 * NS;
  const traces = Math.floor((MIB * 2 ** 20) / perTrace);
  // 64 distinct traces (samples written once), each copy with its own CDP number and coordinates.
  const templates = Array.from({ length: 64 }, (_, j) => segyTrace(spec, { fields: [[71, 2, 0xffff - 99]], samples: Float32Array.from({ length: NS }, (_, k) => Math.sin(k / 7 + j / 5) * 1000 * Math.exp(-k / 900)) }));
  const batch = Buffer.allocUnsafe(256 * perTrace);
  let filled = 0;
  for (let i = 0; i < traces; i++) {
    const at = filled * perTrace;
    templates[i % 64].copy(batch, at);
    batch.writeInt32BE(1 + i, at + 20);
    batch.writeInt32BE(50_000_000 + 1250 * i, at + 180);
    batch.writeInt32BE(600_000_000 + 300 * i, at + 184);
    if (++filled === 256 || i === traces - 1) { fs.writeSync(fd, batch, 0, filled * perTrace); filled = 0; }
  }
  fs.closeSync(fd);
  return traces;
}

async function plainRead(file: string): Promise<number> {
  let n = 0;
  for await (const c of fs.createReadStream(file, { highWaterMark: CHUNK })) n += (c as Buffer).length;
  return n;
}

async function segyRead(file: string) {
  const reader = new SegyReader({ fileSize: fs.statSync(file).size });
  const g = new GeometryCollector();
  const h = new AbsAmplitudeHistogram();
  let traces = 0;
  for await (const t of reader.readFloat32(fs.createReadStream(file, { highWaterMark: CHUNK }))) { g.add(t.header); h.add(t.samples); traces++; }
  return { traces, reader, clip: h.percentile(99) };
}

async function main() {
  const file = path.join(os.tmpdir(), `cayline-segy-bench-${process.pid}.sgy`);
  try {
    const t0 = performance.now();
    const traces = generate(file);
    const size = fs.statSync(file).size;
    console.log(`generated ${(size / 2 ** 20).toFixed(0)} MiB, ${traces} traces × ${NS} samples, format ${FORMAT} (${((performance.now() - t0) / 1000).toFixed(1)} s)`);
    await plainRead(file); // warm the page cache so both sides read from memory
    const ratios: number[] = [];
    for (let run = 0; run < 3; run++) {
      const a = performance.now(); await plainRead(file); const plain = performance.now() - a;
      const b = performance.now(); const r = await segyRead(file); const ours = performance.now() - b;
      if (r.traces !== traces) throw new Error(`read ${r.traces} traces of ${traces}`);
      ratios.push(ours / plain);
      console.log(`run ${run + 1}: plain read ${(plain / 1000).toFixed(2)} s, SEG-Y reader ${(ours / 1000).toFixed(2)} s → ratio ${(ours / plain).toFixed(2)}; buffered peak ${(r.reader.maxBufferedBytes / 1024).toFixed(0)} KiB ≤ bound ${(r.reader.memoryBound() / 1024).toFixed(0)} KiB; 99th percentile |a| ${r.clip.toFixed(1)}`);
    }
    ratios.sort((x, y) => x - y);
    console.log(`SEG-Y read ÷ plain sequential read: median ${ratios[1].toFixed(2)}; peak RSS ${(peak / 2 ** 20).toFixed(0)} MiB (goal ≤ 512)`);

    // the upload's whole path, three rounds (this machine's timings wander by ×2 from run to run): ingest to the
    // stored form, then render the line to the tile pyramid; each round paired with its own plain read
    const whole: number[] = [];
    let width = 0;
    for (let round = 0; round < 3; round++) {
      const work = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-segy-bench-work-'));
      try {
        const a = performance.now(); await plainRead(file); const plain = performance.now() - a;
        const b = performance.now();
        const ing = await ingestSegy(fs.createReadStream(file, { highWaterMark: CHUNK }), work, { fileSize: size });
        const ingestMs = performance.now() - b;
        const c = performance.now();
        const r = await openRender({ amplitudesPath: path.join(work, 'amplitudes.f32'), ns: ing.samplesPerTrace, selection: null, width: ing.traces, settings: { ramp: 'grey', clipPercentile: 99, agcMs: null }, intervalMs: 2 });
        const out = path.join(work, 'pyramid');
        fs.mkdirSync(out);
        try {
          await buildPyramidFromStrips(r.strips, out, {});
        } finally {
          await r.close();
        }
        const renderMs = performance.now() - c;
        width = ing.traces;
        whole.push((ingestMs + renderMs) / plain);
        console.log(`round ${round + 1}: plain read ${(plain / 1000).toFixed(2)} s; ingest ${(ingestMs / 1000).toFixed(2)} s (×${(ingestMs / plain).toFixed(2)}), render to the pyramid ${(renderMs / 1000).toFixed(2)} s (×${(renderMs / plain).toFixed(2)}) → read + render ×${((ingestMs + renderMs) / plain).toFixed(2)}`);
      } finally {
        fs.rmSync(work, { recursive: true, force: true });
      }
    }
    console.log(`read + render ÷ plain read: median ${median(whole).toFixed(2)} (goal ≤ 3); peak RSS ${(peak / 2 ** 20).toFixed(0)} MiB (goal ≤ 512)`);

    // the pyramid's own share, for the record: the same JPEG tiles and levels from strips already drawn
    // (one textured strip copied for each), no amplitudes read or drawn — what no reader or renderer can take away
    const floors: number[] = [];
    const strip = Buffer.allocUnsafe(width * 512);
    for (let i = 0; i < strip.length; i++) strip[i] = (i * 2654435761) >>> 24; // texture, so JPEG has work as with a section
    for (let round = 0; round < 3; round++) {
      const work = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-segy-bench-floor-'));
      try {
        const a = performance.now(); await plainRead(file); const plain = performance.now() - a;
        const d = performance.now();
        await buildPyramidFromStrips({ width, height: NS, channels: 1, readStrip: async (_y, rows) => Buffer.from(strip.subarray(0, width * rows)) }, work, {});
        floors.push((performance.now() - d) / plain);
      } finally {
        fs.rmSync(work, { recursive: true, force: true });
      }
    }
    console.log(`the pyramid alone from drawn strips ÷ plain read: median ${median(floors).toFixed(2)} of ${floors.map((x) => x.toFixed(2)).join(', ')}`);
  } finally {
    clearInterval(sampler);
    fs.rmSync(file, { force: true });
  }
}

void main();
