/**
 * A demo SEG-Y line: a synthetic demo section (demo.ts) written as a SEG-Y
 * rev 1 file (SEG 2002 byte positions, references.md), so a new user can try
 * the SEG-Y path — self-calibration from the trace headers, true amplitudes,
 * the header viewer — without a file of their own.
 *
 * The file: an ASCII textual header naming the invented scenario, the binary
 * header (sample interval 3217–3218, samples per trace 3221–3222, format 5 =
 * IEEE float32 at 3225–3226, metres at 3255–3256, revision 1.0 at 3501–3502,
 * fixed trace length at 3503–3504), and per trace: sequence numbers (1–4,
 * 5–8), CDP number (21–24), coordinate scalar −100 (71–72, centimetres),
 * source X/Y (73–80), coordinate units 1 = length (89–90), delay recording
 * time (109–110, half a sample: the synthetic sample sits at the row centre),
 * samples and interval (115–118) and CDP X/Y (181–188) in WGS 84 / UTM, big
 * endian. Trace u lies (u + ½)·Δx along the straight line between the
 * section's line ends, so the self-calibrated distances are the model's.
 */
import proj4 from 'proj4';
import { proj4Definition } from '../segy/crs';
import { EarthModel, renderModel } from './model';
import type { DemoSectionDef } from './demo';

export interface DemoSegyOptions {
  /** Traces (default 1,600: one every 10 m over 16 km). */
  traces?: number;
  /** Samples per trace (default 625: 4 ms over 2,500 ms). */
  samples?: number;
}

/** WGS 84 / UTM zone (EPSG code) of a longitude and latitude. */
export function utmEpsgOf(lon: number, lat: number): number {
  const zone = Math.min(60, Math.max(1, Math.floor((lon + 180) / 6) + 1));
  return (lat < 0 ? 32700 : 32600) + zone;
}

function textualHeader(def: DemoSectionDef, epsg: number, dtMs: number, traces: number, samples: number): Buffer {
  const lines = [
    `CAYLINE DEMO LINE ${def.lineName} - SURVEY ${def.survey} - INVENTED TESSEL BASIN`,
    'SYNTHETIC: GEOMETRIC EARTH MODEL CONVOLVED WITH A 30 HZ RICKER WAVELET',
    `NOT REAL DATA. BUILDUP: ${def.model.buildup.name.toUpperCase()}`,
    `TRACES ${traces}, SAMPLES ${samples}, INTERVAL ${dtMs} MS, DELAY ${dtMs / 2} MS, TWT`,
    'SAMPLE FORMAT 5 (IEEE FLOAT 32, BIG ENDIAN)',
    `CDP X/Y BYTES 181/185, SCALAR -100, EPSG ${epsg} (WGS 84 / UTM)`,
    'POLARITY: IMPEDANCE INCREASE DOWNWARD IS A POSITIVE AMPLITUDE',
  ];
  const out = Buffer.alloc(3200, 0x20);
  for (let i = 0; i < 40; i++) {
    const body = i === 39 ? 'END TEXTUAL HEADER' : i === 38 ? 'SEG Y REV1' : (lines[i] ?? '');
    out.write(`C${String(i + 1).padStart(2, ' ')} ${body}`.slice(0, 80), i * 80, 'ascii');
  }
  return out;
}

/** The demo section `def` as a SEG-Y file (about 4 bytes × traces × samples). */
export function demoSegy(def: DemoSectionDef, opts: DemoSegyOptions = {}): { bytes: Buffer; epsg: number; traces: number; samples: number; dtMs: number; dxM: number } {
  const traces = opts.traces ?? 1600;
  const samples = opts.samples ?? 625;
  const [x0, x1] = def.model.xRangeM;
  const [t0, t1] = def.model.twtRangeMs;
  const dxM = (x1 - x0) / traces;
  const dtMs = (t1 - t0) / samples;
  const dtUs = Math.round(dtMs * 1000);
  if (t0 !== 0 || Math.abs(dtUs - dtMs * 1000) > 1e-6 || dtUs > 65535) throw new Error(`demoSegy: ${samples} samples over ${t0}–${t1} ms do not give a whole-microsecond interval`);
  const model = new EarthModel(def.model, def.seed);
  const img = renderModel(model, { width: traces, height: samples, seed: def.seed, keepAmplitude: true });
  const amp = img.amplitude!;

  const epsg = utmEpsgOf(def.lineStart.lon, def.lineStart.lat);
  const toUtm = proj4('EPSG:4326', proj4Definition(epsg)!);
  const [ax, ay] = toUtm.forward([def.lineStart.lon, def.lineStart.lat]);
  const [bx, by] = toUtm.forward([def.lineEnd.lon, def.lineEnd.lat]);
  const len = Math.hypot(bx - ax, by - ay);
  const ux = (bx - ax) / len;
  const uy = (by - ay) / len;

  const traceBytes = 240 + 4 * samples;
  const bytes = Buffer.alloc(3600 + traces * traceBytes);
  textualHeader(def, epsg, dtMs, traces, samples).copy(bytes, 0);
  const bin = (pos: number) => pos - 1; // 1-based file positions
  bytes.writeInt32BE(1, bin(3205)); // line number
  bytes.writeInt16BE(1, bin(3213)); // traces per ensemble
  bytes.writeUInt16BE(dtUs, bin(3217));
  bytes.writeUInt16BE(samples, bin(3221));
  bytes.writeInt16BE(5, bin(3225));
  bytes.writeInt16BE(1, bin(3227)); // ensemble fold
  bytes.writeInt16BE(1, bin(3255)); // metres
  bytes.writeUInt16BE(0x0100, bin(3501));
  bytes.writeInt16BE(1, bin(3503));
  for (let u = 0; u < traces; u++) {
    const at = 3600 + u * traceBytes;
    const h = (pos: number) => at + pos - 1;
    const along = (u + 0.5) * dxM;
    const cx = Math.round((ax + ux * along) * 100);
    const cy = Math.round((ay + uy * along) * 100);
    bytes.writeInt32BE(u + 1, h(1));
    bytes.writeInt32BE(u + 1, h(5));
    bytes.writeInt32BE(1, h(9));
    bytes.writeInt32BE(1001 + u, h(21));
    bytes.writeInt16BE(1, h(29)); // trace identification: seismic data
    bytes.writeInt16BE(-100, h(71));
    bytes.writeInt32BE(cx, h(73));
    bytes.writeInt32BE(cy, h(77));
    bytes.writeInt16BE(1, h(89));
    bytes.writeInt16BE(Math.round(dtMs / 2), h(109));
    bytes.writeUInt16BE(samples, h(115));
    bytes.writeUInt16BE(dtUs, h(117));
    bytes.writeInt32BE(cx, h(181));
    bytes.writeInt32BE(cy, h(185));
    for (let v = 0; v < samples; v++) bytes.writeFloatBE(amp[v * traces + u], at + 240 + 4 * v);
  }
  return { bytes, epsg, traces, samples, dtMs, dxM };
}
