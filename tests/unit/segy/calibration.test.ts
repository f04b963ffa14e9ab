/**
 * Self-calibration from SEG-Y headers, the CRS transform of the line ends and
 * the streaming clip percentile. Outside references: Debian's python3-segyio
 * reads the coordinates back and numpy sums the distances; python3-pyproj
 * transforms to WGS84 (references.md, "Reference libraries").
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { toWgs84 } from '../../../server/segy/crs';
import { GeometryCollector, summariseGeometry, type GeometryOptions } from '../../../server/segy/geometry';
import { SegyReader } from '../../../server/segy/reader';
import { AbsAmplitudeHistogram } from '../../../server/segy/stats';
import { needReference, pythonReference, runPython } from '../../helpers/python-ref';
import { chunked, writeSegy, type Field, type WriterInput } from '../../helpers/segy-writer';

const segyio = pythonReference(['segyio', 'numpy']);
const pyproj = pythonReference('pyproj');
const dir = mkdtempSync(path.join(tmpdir(), 'cayline-segy-cal-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function summarise(input: WriterInput, opts: GeometryOptions = {}) {
  const reader = new SegyReader({ overrides: opts.overrides });
  const g = new GeometryCollector();
  for await (const t of reader.read(chunked(writeSegy(input)))) g.add(t.header);
  return summariseGeometry(reader.header!, g, opts);
}

/** A curved invented TB-2024 line: 60 traces, positions in cm (scalar −100), UTM 31N-like metres. */
const curved = (i: number): [number, number] => [Math.round((512000 + 12.5 * i + 0.02 * i * i) * 100), Math.round((6201000 + 3 * i * Math.sin(i / 9)) * 100)];

describe('self-calibration', () => {
  it('x = cumulative distance of scaled CDP X/Y, checked against segyio + numpy on the same file', async (ctx) => {
    const py = needReference(ctx, segyio);
    const input: WriterInput = {
      format: 5, sampleInterval: 2000, samplesPerTrace: 8, binary: [[3255, 2, 1]],
      traces: Array.from({ length: 60 }, (_, i) => ({ fields: [[21, 4, 3001 + i], [71, 2, 0x10000 - 100], [181, 4, curved(i)[0]], [185, 4, curved(i)[1]], [109, 2, 40]] as Field[], samples: Array(8).fill(0) })),
    };
    const fn = path.join(dir, 'curved.sgy');
    writeFileSync(fn, writeSegy(input));
    const ref = runPython(py, `
import json, sys, segyio, numpy as np
a = json.load(sys.stdin)
with segyio.open(a['fn'], ignore_geometry=True) as f:
    s = np.array([h[segyio.su.scalco] for h in f.header], dtype=float)
    k = np.where(s > 0, s, np.where(s < 0, -1.0 / s, 1.0))
    x = np.array([h[segyio.su.cdpx] for h in f.header]) * k
    y = np.array([h[segyio.su.cdpy] for h in f.header]) * k
    d = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))])
    print(json.dumps({'d': d.tolist(), 'ends': [[x[0], y[0]], [x[-1], y[-1]]], 'samples': list(map(float, f.samples))}))
`, { fn }) as { d: number[]; ends: number[][]; samples: number[] };
    const s = await summarise(input);
    expect(s.positionSource).toBe('cdp');
    expect(s.dimension).toBe('2d');
    expect(s.lengthUnit).toBe('m');
    [...s.x].forEach((v, i) => expect(v).toBeCloseTo(ref.d[i], 6));
    expect(s.lineEnds.first[0]).toBeCloseTo(ref.ends[0][0], 6);
    expect(s.lineEnds.last[1]).toBeCloseTo(ref.ends[1][1], 6);
    // segyio's sample axis (f.samples) is delay + index × interval in ms, like ours.
    expect(s.y).toMatchObject({ domain: 'time', unit: 'ms', start: 40, step: 2, samples: 8 });
    ref.samples.forEach((t, i) => expect(s.y.start + i * s.y.step).toBeCloseTo(t, 9));
  });

  it('a positive coordinate scalar multiplies; the time scalar applies to the delay', async () => {
    const s = await summarise({
      format: 5, sampleInterval: 500, samplesPerTrace: 1,
      traces: [0, 1, 2].map((i) => ({ fields: [[71, 2, 10], [181, 4, 100 + 3 * i], [185, 4, 50 + 4 * i], [109, 2, 7], [215, 2, 0x10000 - 10]] as Field[], samples: [0] })),
    });
    expect([...s.x]).toEqual([0, 50, 100]); // (3, 4) steps × 10 = 50 per trace
    expect(s.y.start).toBeCloseTo(0.7, 12);
    expect(s.y.step).toBe(0.5);
  });

  it('falls back to source, then group coordinates, then CDP number × spacing', async () => {
    const mk = (pos: number, n = 4) => ({
      format: 5 as const, sampleInterval: 1000, samplesPerTrace: 1,
      traces: Array.from({ length: n }, (_, i) => ({ fields: [[21, 4, 20 + 2 * i], ...(pos ? [[pos, 4, 1000 + 30 * i], [pos + 4, 4, 40 * i]] : [])] as Field[], samples: [0] })),
    });
    const src = await summarise(mk(73));
    expect(src.positionSource).toBe('source');
    expect(src.x[3]).toBeCloseTo(150, 12);
    const grp = await summarise(mk(81));
    expect(grp.positionSource).toBe('group');
    expect(grp.x[2]).toBeCloseTo(100, 12);
    const byCdp = await summarise(mk(0), { cdpSpacing: 6.25 });
    expect(byCdp.positionSource).toBe('cdpNumber');
    expect([...byCdp.x]).toEqual([0, 12.5, 25, 37.5]);
    await expect(summarise(mk(0))).rejects.toThrow(/^cdpX \(trace header bytes 181–188\): no trace has coordinates/);
  });

  it('depth data: metres or feet by the measurement system, when asked or when the textual header says so', async () => {
    const input = (ft: boolean, text?: string): WriterInput => ({
      format: 5, sampleInterval: 5, samplesPerTrace: 3, text, binary: [[3255, 2, ft ? 2 : 1]],
      traces: [0, 1].map((i) => ({ fields: [[21, 4, i + 1], [109, 2, 100]] as Field[], samples: [0, 0, 0] })),
    });
    const byText = await summarise(input(false, 'C 1 TESSEL BASIN TB-14 DEPTH MIGRATED SECTION'), { cdpSpacing: 12.5 });
    expect(byText.y).toMatchObject({ domain: 'depth', unit: 'm', start: 100, step: 5 });
    const asked = await summarise(input(true), { cdpSpacing: 12.5, domain: 'depth' });
    expect(asked.y).toMatchObject({ domain: 'depth', unit: 'ft' });
    expect(asked.lengthUnit).toBe('ft');
    expect((await summarise(input(false), { cdpSpacing: 1 })).y.domain).toBe('time');
  });

  it('3D: inline and crossline ranges from the headers', async () => {
    const traces = [];
    for (let il = 200; il <= 206; il += 2) for (let xl = 1000; xl < 1005; xl++) traces.push({ fields: [[189, 4, il], [193, 4, xl], [181, 4, xl * 25], [185, 4, il * 25]] as Field[], samples: [1] });
    const s = await summarise({ format: 5, sampleInterval: 4000, samplesPerTrace: 1, traces });
    expect(s.dimension).toBe('3d');
    expect(s.inline).toEqual({ min: 200, max: 206, count: 4 });
    expect(s.crossline).toEqual({ min: 1000, max: 1004, count: 5 });
  });
});

describe('line ends to WGS84', () => {
  const cases: Array<[number, Array<[number, number]>]> = [
    [32631, [[512000, 6201000], [499999.5, 5500000]]],
    [32719, [[350000, 7650000], [612345.6, 4500000.25]]],
    [25832, [[400000, 5700000]]],
    [26915, [[500000, 3300000]]],
    [4326, [[3.25, 56.5]]],
  ];
  it.for(cases)('EPSG:%s agrees with pyproj within 1e-9 degrees', ([epsg, pts], ctx) => {
    const py = needReference(ctx, pyproj);
    const ref = runPython(py, `
import json, sys
from pyproj import Transformer
a = json.load(sys.stdin)
t = Transformer.from_crs(f"EPSG:{a['epsg']}", "EPSG:4326", always_xy=True)
print(json.dumps([list(t.transform(x, y)) for x, y in a['pts']]))
`, { epsg, pts }) as number[][];
    const ours = toWgs84(epsg, pts);
    ours.forEach(([lon, lat], i) => {
      expect(Math.abs(lon - ref[i][0])).toBeLessThan(1e-9);
      expect(Math.abs(lat - ref[i][1])).toBeLessThan(1e-9);
    });
  });
  it('refuses a code it has no definition for, naming the field', () => {
    expect(() => toWgs84(27700, [[0, 0]])).toThrow(/^epsg \(upload form\): EPSG:27700 is not among the supported codes/);
  });
});

describe('clip percentile of |amplitude| (histogram)', () => {
  it('is within the stated relative bound 2^-10 of the exact order statistic', () => {
    let s = 12345;
    const rnd = () => { s = (s * 1664525 + 1013904223) >>> 0; return s / 2 ** 32; };
    const h = new AbsAmplitudeHistogram();
    const all: number[] = [];
    for (let t = 0; t < 50; t++) {
      const tr = Float64Array.from({ length: 2000 }, () => Math.fround((rnd() - 0.5) * 10 ** (rnd() * 6 - 2)));
      h.add(tr);
      for (const v of tr) all.push(Math.abs(v));
    }
    h.add([NaN, Infinity]);
    all.sort((a, b) => a - b);
    for (const p of [50, 90, 98, 99.5, 100]) {
      const exact = all[Math.ceil((p / 100) * all.length) - 1];
      const got = h.percentile(p);
      expect(got).toBeGreaterThanOrEqual(exact);
      expect(got).toBeLessThanOrEqual(exact * (1 + 2 ** -10));
    }
    expect(h.nonFinite).toBe(2);
    expect(new AbsAmplitudeHistogram().percentile(99)).toBe(0);
    expect(() => h.percentile(0)).toThrow(RangeError);
  });

  it('counts float32 traces (read in place) as it counts the same values in float64', () => {
    let s = 99;
    const rnd = () => { s = (s * 1664525 + 1013904223) >>> 0; return s / 2 ** 32; };
    const a = new AbsAmplitudeHistogram();
    const b = new AbsAmplitudeHistogram();
    const backing = new Float32Array(3000);
    for (let t = 0; t < 20; t++) {
      const tr = backing.subarray(t % 7, (t % 7) + 2000); // a view at an offset, as the reader's reused array may be
      for (let i = 0; i < tr.length; i++) tr[i] = (rnd() - 0.5) * 10 ** (rnd() * 8 - 4);
      tr[t] = t % 2 ? Number.NaN : -Infinity;
      a.add(tr);
      b.add(Float64Array.from(tr));
    }
    expect(a.total).toBe(40_000);
    expect(a.nonFinite).toBe(20);
    expect(Array.from(a.counts)).toEqual(Array.from(b.counts));
    expect([a.max, a.percentile(99)]).toEqual([b.max, b.percentile(99)]);
  });
});
