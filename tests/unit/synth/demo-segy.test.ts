/**
 * The demo SEG-Y line (server/synth/segy.ts) is a file other readers take as
 * SEG-Y rev 1: Debian's python3-segyio reads its headers and samples, pyproj
 * places its first CDP on the line's start, and Cayline's own ingest
 * calibrates it from the headers to the model's distances and times.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { demoSegy, utmEpsgOf } from '../../../server/synth/segy';
import { DEMO_SECTIONS } from '../../../server/synth/demo';
import { ingestSegy } from '../../../server/segy/ingest';
import { needReference, pythonReference, runPython } from '../../helpers/python-ref';

const def = DEMO_SECTIONS[0];
const TRACES = 160;
const SAMPLES = 125; // 20 ms over 2,500 ms
const dir = mkdtempSync(path.join(tmpdir(), 'cayline-demo-segy-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const made = demoSegy(def, { traces: TRACES, samples: SAMPLES });
const file = path.join(dir, 'demo.sgy');
writeFileSync(file, made.bytes);

async function* chunks(b: Buffer, size = 65536) {
  for (let i = 0; i < b.length; i += size) yield b.subarray(i, i + size);
}

/** Great-circle distance (haversine, spherical Earth of radius 6,371,008.8 m — the IUGG mean radius; common practice for short distances). */
function haversineM(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const r = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * r) / 2) ** 2 + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.sin(((lon2 - lon1) * r) / 2) ** 2;
  return 2 * 6371008.8 * Math.asin(Math.sqrt(a));
}

describe('demo SEG-Y line', () => {
  it('is the size SEG-Y rev 1 says: 3,600 header bytes plus (240 + 4·samples) per trace', () => {
    expect(made.bytes.length).toBe(3600 + TRACES * (240 + 4 * SAMPLES));
    expect(made.dtMs).toBe(20);
    expect(utmEpsgOf(63.4, -27.8)).toBe(32741); // UTM zone 41 south: zones are 6° wide from 180° W (from memory)
  });

  it('Cayline ingests it as a 2D line calibrated from its CDP coordinates: distances every Δx, times from half a sample', async () => {
    const r = await ingestSegy(chunks(made.bytes), dir, { fileSize: made.bytes.length });
    expect(r.summary.dimension).toBe('2d');
    expect(r.summary.positionSource).toBe('cdp');
    expect(r.traces).toBe(TRACES);
    expect(r.summary.y).toMatchObject({ domain: 'time', unit: 'ms', start: 10, step: 20, samples: SAMPLES });
    // coordinates in centimetres: each step Δx = 100 m within rounding
    expect(r.summary.x[TRACES - 1]).toBeCloseTo((TRACES - 1) * made.dxM, 1);
    expect(r.warnings).toEqual([]);
  });

  it('python3-segyio reads the same headers and samples (an independent reader)', (ctx) => {
    const py = needReference(ctx, pythonReference(['segyio', 'numpy']));
    const ref = runPython(py, `
import json, sys, segyio
a = json.load(sys.stdin)
with segyio.open(a['fn'], ignore_geometry=True) as f:
    print(json.dumps({
        'n': f.tracecount, 'format': int(f.bin[segyio.BinField.Format]), 'dt': int(f.bin[segyio.BinField.Interval]),
        'ns': len(f.samples), 'cdp': int(f.header[17][segyio.TraceField.CDP]),
        'cdpx': int(f.header[17][segyio.TraceField.CDP_X]), 'scalar': int(f.header[17][segyio.TraceField.SourceGroupScalar]),
        'delay': int(f.header[17][segyio.TraceField.DelayRecordingTime]),
        'trace': [float(x) for x in f.trace[17]],
    }))
`, { fn: file }) as { n: number; format: number; dt: number; ns: number; cdp: number; cdpx: number; scalar: number; delay: number; trace: number[] };
    expect(ref).toMatchObject({ n: TRACES, format: 5, dt: 20000, ns: SAMPLES, cdp: 1018, scalar: -100, delay: 10 });
    const at = 3600 + 17 * (240 + 4 * SAMPLES);
    expect(ref.cdpx).toBe(made.bytes.readInt32BE(at + 180));
    expect(ref.trace).toEqual(Array.from({ length: SAMPLES }, (_, v) => made.bytes.readFloatBE(at + 240 + 4 * v)));
    expect(ref.trace.some((v) => v !== 0)).toBe(true);
  });

  it('pyproj puts the first CDP half a trace from the line start, the last half a trace from the line end', (ctx) => {
    const py = needReference(ctx, pythonReference(['pyproj']));
    const xy = (u: number) => {
      const at = 3600 + u * (240 + 4 * SAMPLES);
      return [made.bytes.readInt32BE(at + 180) / 100, made.bytes.readInt32BE(at + 184) / 100];
    };
    const [first, last] = runPython(py, `
import json, sys
from pyproj import Transformer
a = json.load(sys.stdin)
t = Transformer.from_crs(a['epsg'], 4326, always_xy=True)
print(json.dumps([list(t.transform(x, y)) for x, y in a['pts']]))
`, { epsg: made.epsg, pts: [xy(0), xy(TRACES - 1)] }) as [number, number][];
    const lineM = haversineM(def.lineStart.lon, def.lineStart.lat, def.lineEnd.lon, def.lineEnd.lat);
    expect(haversineM(def.lineStart.lon, def.lineStart.lat, first[0], first[1])).toBeCloseTo(made.dxM / 2, -1); // within 5 m
    const fromEnd = lineM - (TRACES - 0.5) * made.dxM; // the line is a little longer or shorter than the model's 16 km
    expect(Math.abs(haversineM(def.lineEnd.lon, def.lineEnd.lat, last[0], last[1]) - Math.abs(fromEnd))).toBeLessThan(0.01 * lineM);
  });
});
