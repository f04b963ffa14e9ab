/**
 * Tile pyramid benchmark: a 20000 × 6000 greyscale PNG with structure, the
 * pyramid built by server/services/tiles.service.ts, as a ratio to decoding
 * the same file once with sharp (`sharp(file).raw().toBuffer()`), the floor
 * any pyramid build has to pay. Goal: ratio ≤ 2. For comparison, sharp's own
 * `.tile({ layout: 'dz' })` on the same file. Prints peak RSS (sampled).
 *
 *   npx tsx tests/bench/tiles.bench.ts [width height]
 *
 * Peak memory is measured in a fresh child process that only builds the
 * pyramid (so the benchmark's own buffers do not count).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import sharp from 'sharp';
import { buildPyramid } from '../../server/services/tiles.service';
import { median } from './stats';

const W = Number(process.argv[2] === '--child' ? 0 : (process.argv[2] ?? 20000));
const H = Number(process.argv[3] ?? 6000);
const RUNS = 3;

let peak = 0;
const sampler = setInterval(() => {
  peak = Math.max(peak, process.memoryUsage().rss);
}, 20);

function structuredGrey(w: number, h: number): Buffer {
  const b = Buffer.allocUnsafe(w * h);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      // gently dipping reflectors, a mound, and a little texture
      const mound = 600 * Math.exp(-(((x - w / 2) / (w / 8)) ** 2));
      const v = 128 + 100 * Math.sin((y + mound * (y > h / 2 ? 1 : 0) + 0.02 * x) / 9) * Math.cos(x / 3000) + ((x * 31 + y * 17) % 7);
      b[y * w + x] = v < 0 ? 0 : v > 255 ? 255 : v;
    }
  }
  return b;
}

async function time(f: () => Promise<unknown>): Promise<number> {
  const t0 = performance.now();
  await f();
  return performance.now() - t0;
}

/** Child mode: build once, print the sampled peak RSS in bytes. */
async function child(file: string) {
  const work = fs.mkdtempSync(path.join(path.dirname(file), 'child-'));
  fs.mkdirSync(path.join(work, 'pyramid'));
  const base = process.memoryUsage().rss;
  peak = base;
  await buildPyramid(file, path.join(work, 'pyramid'), { workDir: work, limitInputPixels: 400_000_000 });
  clearInterval(sampler);
  fs.rmSync(work, { recursive: true, force: true });
  console.log(JSON.stringify({ base, peak }));
}

async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-bench-tiles-'));
  try {
    const file = path.join(dir, 'section.png');
    await sharp(structuredGrey(W, H), { raw: { width: W, height: H, channels: 1 }, limitInputPixels: false })
      .toColourspace('b-w')
      .png({ compressionLevel: 6 })
      .toFile(file);
    const mb = fs.statSync(file).size / 1e6;
    console.log(`input: ${W} × ${H} greyscale PNG, ${mb.toFixed(1)} MB; sharp concurrency ${sharp.concurrency()}, ${os.cpus().length} CPUs`);

    const decode: number[] = [];
    const ours: number[] = [];
    const dz: number[] = [];
    let tiles = 0;
    let peakOurs = 0;
    for (let r = 0; r < RUNS; r++) {
      decode.push(await time(() => sharp(file, { limitInputPixels: false }).raw().toBuffer()));

      const work = fs.mkdtempSync(path.join(dir, 'work-'));
      const out = path.join(work, 'pyramid');
      fs.mkdirSync(out);
      peak = process.memoryUsage().rss;
      ours.push(
        await time(async () => {
          tiles = (await buildPyramid(file, out, { workDir: work, limitInputPixels: 400_000_000 })).tileCount;
        }),
      );
      peakOurs = Math.max(peakOurs, peak);
      fs.rmSync(work, { recursive: true, force: true });

      const dzOut = fs.mkdtempSync(path.join(dir, 'dz-'));
      dz.push(await time(() => sharp(file, { limitInputPixels: false }).jpeg({ quality: 90 }).tile({ size: 512, layout: 'dz' }).toFile(path.join(dzOut, 't.dz'))));
      fs.rmSync(dzOut, { recursive: true, force: true });
    }
    const d = median(decode);
    console.log(`decode once (floor):           ${d.toFixed(0)} ms   (runs ${decode.map((x) => x.toFixed(0)).join(', ')})`);
    console.log(`tiles.service buildPyramid:    ${median(ours).toFixed(0)} ms   ratio ${(median(ours) / d).toFixed(2)}  (goal ≤ 2; ${tiles} tiles + preview + thumbnail)`);
    console.log(`sharp .tile({layout:'dz'}):    ${median(dz).toFixed(0)} ms   ratio ${(median(dz) / d).toFixed(2)}  (reference, no preview)`);
    const tsx = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', '..', 'node_modules', '.bin', 'tsx');
    const c = spawnSync(tsx, [fileURLToPath(import.meta.url), '--child', file], { encoding: 'utf8' });
    const m = JSON.parse(c.stdout.trim().split('\n').pop() ?? '{}');
    const mib = (b: number) => `${(b / 2 ** 20).toFixed(0)} MiB`;
    console.log(`peak RSS, pyramid build alone: ${mib(m.peak)} (process at start ${mib(m.base)}; sampled every 20 ms in a fresh process)`);
    console.log(`peak RSS in this process:      ${mib(peakOurs)} (includes the benchmark's own image buffers)`);
  } finally {
    clearInterval(sampler);
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[2] === '--child') void child(process.argv[3]);
else void main();
