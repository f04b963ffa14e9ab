/**
 * Rendering amplitudes: ramp lookup tables, clip mapping, AGC, and the render
 * pass over a stored float32 file (selection order, clip percentile, strips).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { RAMP_STOPS, agc, agcInto, agcWindowSamples, hexRgb, rampIndex, rampLut } from '../../../server/segy/render';
import { openRender } from '../../../server/segy/section-data';

/** sRGB (IEC 61966-2-1) to CIE L*a*b* (CIE 15:2004), D65 white. */
function lab([r, g, b]: readonly number[]): [number, number, number] {
  const lin = (c: number) => { c /= 255; return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4; };
  const [R, G, B] = [lin(r), lin(g), lin(b)];
  return xyzToLab(0.4124 * R + 0.3576 * G + 0.1805 * B, 0.2126 * R + 0.7152 * G + 0.0722 * B, 0.0193 * R + 0.1192 * G + 0.9505 * B);
}
function xyzToLab(X: number, Y: number, Z: number): [number, number, number] {
  const f = (t: number) => (t > 216 / 24389 ? Math.cbrt(t) : (24389 / 27 * t + 16) / 116);
  const [fx, fy, fz] = [f(X / 0.95047), f(Y), f(Z / 1.08883)];
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}
/**
 * Colour-vision deficiency simulation on linear RGB, severity 1: Machado,
 * Oliveira & Fernandes (2009), "A physiologically-based model for simulation
 * of color vision deficiency", IEEE TVCG 15(6) (matrices from memory).
 */
const CVD = {
  deuteranopia: [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.01182, 0.04294, 0.968881]],
  protanopia: [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]],
};
function simulate(rgb: readonly number[], m: number[][]): number[] {
  const lin = (c: number) => { c /= 255; return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4; };
  const enc = (c: number) => { c = Math.min(1, Math.max(0, c)); return 255 * (c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055); };
  const l = rgb.map(lin);
  return m.map((row) => enc(row[0] * l[0] + row[1] * l[1] + row[2] * l[2]));
}
const dE = (a: readonly number[], b: readonly number[]) => Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);

describe('ramps', () => {
  it('maps −clip, 0 and +clip to the ends and the middle, clamps beyond, and shows NaN as zero', () => {
    expect(rampIndex(-5, 5)).toBe(0);
    expect(rampIndex(0, 5)).toBe(128);
    expect(rampIndex(5, 5)).toBe(255);
    expect(rampIndex(-50, 5)).toBe(0);
    expect(rampIndex(1e9, 5)).toBe(255);
    expect(rampIndex(2.5, 5)).toBe(191); // (0.5 + 1) × 127.5 = 191.25
    expect(rampIndex(Number.NaN, 5)).toBe(128);
  });

  it('rounds exactly as Math.round((v / clip + 1) × 127.5) does, at every half-way point and the float steps around it', () => {
    // the reference is the rule as written in render.ts; rampIndex avoids Math.round for speed and must not differ from it anywhere
    const reference = (v: number, clip: number) => (Number.isNaN(v) ? 128 : Math.min(255, Math.max(0, Math.round((v / clip + 1) * 127.5))));
    const f = new Float64Array(1);
    const u = new BigInt64Array(f.buffer);
    const step = (v: number, k: number) => { f[0] = v; u[0] += BigInt(v >= 0 ? k : -k); return f[0]; };
    let checked = 0;
    for (const clip of [1, 5, 912.5, 3.3e-7, 7.1e4]) {
      for (let k = 0; k <= 255; k++) {
        const v0 = clip * ((k + 0.5) / 127.5 - 1); // where the index changes from k to k + 1
        for (let d = -40; d <= 40; d++) {
          const v = step(v0, d);
          expect(rampIndex(v, clip), `v=${v} clip=${clip}`).toBe(reference(v, clip));
          checked++;
        }
      }
      for (let i = 0; i < 2000; i++) {
        const v = (Math.random() * 2.4 - 1.2) * clip;
        expect(rampIndex(v, clip)).toBe(reference(v, clip));
      }
    }
    expect(checked).toBe(5 * 256 * 81);
    // the one place where floor(x + 0.5) and Math.round(x) part: x = 0.5 − 2⁻⁵⁴ (x + 0.5 rounds up to 1)
    const x = 0.5 - 2 ** -54;
    expect([Math.floor(x + 0.5), Math.round(x)]).toEqual([1, 0]);
    expect(rampIndex((x / 127.5 - 1) * 1, 1)).toBe(reference((x / 127.5 - 1) * 1, 1));
  });

  it('grey: troughs white, peaks black', () => {
    const { channels, lut } = rampLut('grey');
    expect(channels).toBe(1);
    expect([lut[0], lut[128], lut[255]]).toEqual([255, 127, 0]);
  });

  it('diverging: hits its stated stops', () => {
    const { channels, lut } = rampLut('diverging');
    expect(channels).toBe(3);
    const at = (i: number) => [lut[3 * i], lut[3 * i + 1], lut[3 * i + 2]];
    expect(at(0)).toEqual(hexRgb('#1d3a6e'));
    expect(at(255)).toEqual(hexRgb('#6b3f14'));
    const mid = at(128);
    hexRgb('#f5f2eb').forEach((c, k) => expect(Math.abs(mid[k] - c)).toBeLessThanOrEqual(2));
  });

  it('diverging: lightness falls steadily from the white centre to both ends (reads in greyscale)', () => {
    const { lut } = rampLut('diverging');
    const L = (i: number) => lab([lut[3 * i], lut[3 * i + 1], lut[3 * i + 2]])[0];
    for (let i = 128; i < 255; i++) expect(L(i + 1)).toBeLessThan(L(i));
    for (let i = 127; i > 0; i--) expect(L(i - 1)).toBeLessThan(L(i));
    expect(L(128) - L(0)).toBeGreaterThan(60);
    expect(L(128) - L(255)).toBeGreaterThan(60);
  });

  it('diverging: the two arms stay apart for deuteranopes and protanopes', () => {
    const { lut } = rampLut('diverging');
    const rgb = (i: number) => [lut[3 * i], lut[3 * i + 1], lut[3 * i + 2]];
    for (const m of Object.values(CVD)) {
      for (const t of [0.25, 0.5, 0.75, 1]) {
        const neg = lab(simulate(rgb(Math.round((1 - t) * 127.5)), m));
        const pos = lab(simulate(rgb(Math.round((1 + t) * 127.5)), m));
        // CIE76 ΔE above 10 is a clearly visible difference (common practice)
        expect(dE(neg, pos)).toBeGreaterThan(10 + 20 * t);
      }
    }
  });

  it('is not a red–white–blue ramp (no stop has red as its strongest channel by far)', () => {
    for (const [, hex] of RAMP_STOPS.diverging) {
      const [r, g, b] = hexRgb(hex);
      expect(r > 1.8 * g && r > 1.8 * b).toBe(false);
    }
  });
});

describe('AGC', () => {
  /** Brute force: each sample over the RMS of the samples within ±h (truncated). */
  function naive(x: number[], w: number): number[] {
    const h = (w - 1) / 2;
    return x.map((v, j) => {
      let s = 0; let n = 0;
      for (let k = Math.max(0, j - h); k <= Math.min(x.length - 1, j + h); k++) { s += x[k] * x[k]; n++; }
      return s > 0 ? v / Math.sqrt(s / n) : 0;
    });
  }

  it('window in samples: 2·round(ms / dt / 2) + 1', () => {
    expect(agcWindowSamples(40, 4)).toBe(11);
    expect(agcWindowSamples(500, 4)).toBe(127); // 62.5 rounds to 63
    expect(agcWindowSamples(1, 4)).toBe(1);
    expect(() => agcWindowSamples(0, 4)).toThrow();
  });

  it('matches the brute-force RMS AGC, zeros stay zero, a constant trace becomes ±1', () => {
    const x = Array.from({ length: 60 }, (_, j) => (j < 20 ? 0 : j < 40 ? 3 * Math.sin(j) : 40 * Math.cos(j / 3)));
    const ours = Array.from(agc(x, 9));
    naive(x, 9).forEach((v, j) => expect(ours[j]).toBeCloseTo(v, 12));
    expect(ours.slice(0, 15)).toEqual(new Array(15).fill(0));
    expect(Array.from(agc([-2, -2, -2, -2], 3))).toEqual([-1, -1, -1, -1]);
  });

  it('a padded segment gives the same values as the whole trace (how strips are rendered)', () => {
    const x = Array.from({ length: 100 }, (_, j) => Math.sin(j / 3) * (1 + j));
    const whole = agc(x, 11);
    const from = 40; const to = 60; const h = 5;
    const seg = x.slice(from - h, to + h);
    const out = new Float64Array(to - from);
    agcInto(seg, 11, h, h + (to - from), out);
    out.forEach((v, k) => expect(v).toBeCloseTo(whole[from + k], 12));
  });
});

describe('render pass over stored amplitudes', () => {
  it('clips at the percentile of |amplitude| over the section and draws the selected traces in order', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-render-'));
    try {
      const ns = 4;
      // file traces 0..2: trace t = [t+1, −(t+1), 0, 10·(t+1)]
      const data = new Float32Array(3 * ns);
      for (let t = 0; t < 3; t++) data.set([t + 1, -(t + 1), 0, 10 * (t + 1)], t * ns);
      const file = path.join(dir, 'a.f32');
      fs.writeFileSync(file, new Uint8Array(data.buffer));
      const selection = Uint32Array.from([2, 0]); // section shows file trace 2 then 0
      const r = await openRender({ amplitudesPath: file, ns, selection, width: 2, settings: { ramp: 'grey', clipPercentile: 75, agcMs: null }, intervalMs: 4 });
      try {
        // |values| of traces 2 and 0: 3,3,0,30,1,1,0,10 → rank ⌈0.75·8⌉ = 6 → 3 (within the histogram's 2^-10)
        expect(r.clip).toBeGreaterThanOrEqual(3);
        expect(r.clip).toBeLessThan(3 * (1 + 2 ** -10));
        const strip = await r.strips.readStrip(0, ns);
        const { lut } = rampLut('grey');
        const expected = [3, 1, -3, -1, 0, 0, 30, 10].map((v) => lut[rampIndex(v, r.clip)]);
        expect(Array.from(strip)).toEqual(expected);
      } finally {
        await r.close();
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('reads runs of neighbouring traces in batches and draws every column as a trace-by-trace reading would', async () => {
    // 12,000 traces × 100 samples (4.8 MB): more than one 4 MiB batch, with a run broken by traces taken out of order
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-render-batch-'));
    try {
      const ns = 100;
      const traces = 12_000;
      const data = new Float32Array(traces * ns);
      for (let t = 0; t < traces; t++) for (let k = 0; k < ns; k++) data[t * ns + k] = Math.sin(0.37 * k + 0.011 * t) * (1 + (t % 17)) * Math.exp(-k / 80);
      const file = path.join(dir, 'a.f32');
      fs.writeFileSync(file, new Uint8Array(data.buffer));
      const order = [...Array.from({ length: 11_000 }, (_, i) => i), 11_500, 11_002, 11_003, 11_004, 0];
      const selection = Uint32Array.from(order);
      const width = order.length;
      for (const [ramp, agcMs] of [['grey', null], ['grey', 44], ['diverging', null], ['diverging', 44]] as const) {
        const { lut, channels } = rampLut(ramp);
        /** Whether the pixel of column i, row j of a strip `width` wide is the ramp's colour of v. */
        const drawn = (strip: Buffer, j: number, i: number, v: number, clip: number) => {
          const at = (j * width + i) * channels;
          const c = channels * rampIndex(v, clip);
          for (let ch = 0; ch < channels; ch++) if (strip[at + ch] !== lut[c + ch]) return false;
          return true;
        };
        const r = await openRender({ amplitudesPath: file, ns, selection, width, settings: { ramp, clipPercentile: 98, agcMs }, intervalMs: 4 });
        try {
          const y = 37;
          const rows = 20;
          const strip = await r.strips.readStrip(y, rows);
          const win = agcMs ? agcWindowSamples(agcMs, 4) : 0;
          let wrong = 0;
          order.forEach((t, i) => {
            const trace = data.subarray(t * ns, (t + 1) * ns);
            const vals = win ? agc(trace, win) : trace;
            for (let j = 0; j < rows; j++) if (!drawn(strip, j, i, vals[y + j], r.clip)) wrong++;
          });
          expect(wrong).toBe(0);
          // the whole section strip by strip, in order (strips rendered several at a time from one read)
          let bad = 0;
          for (let y0 = 0; y0 < ns; y0 += 32) {
            const n = Math.min(32, ns - y0);
            const st = await r.strips.readStrip(y0, n);
            expect(st.length).toBe(width * n * channels);
            order.forEach((t, i) => {
              const trace = data.subarray(t * ns, (t + 1) * ns);
              const vals = win ? agc(trace, win) : trace;
              for (let j = 0; j < n; j++) if (!drawn(st, j, i, vals[y0 + j], r.clip)) bad++;
            });
          }
          expect(bad).toBe(0);
        } finally {
          await r.close();
        }
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
