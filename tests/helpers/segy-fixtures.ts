/**
 * Small invented SEG-Y files for API and end-to-end tests (Tessel Basin
 * names), written with tests/helpers/segy-writer.ts, with their known
 * geometry and samples so tests can compare exact numbers.
 */
import request from 'supertest';
import { writeSegy, type Field } from './segy-writer';

/** A 2D line: 40 traces × 100 samples, IEEE float (format 5), 4 ms from a 100 ms delay, CDP X/Y 12.5 m apart (scalar −10). */
export const LINE = {
  traces: 40,
  samples: 100,
  intervalUs: 4000,
  delayMs: 100,
  spacingM: 12.5,
  x0: 500_000,
  y0: 6_100_000,
  /** Trace whose header states another sample interval (a warning). */
  oddIntervalTrace: 7,
};

/** The amplitude of trace i, sample j (integers, exact in float32). */
export const lineSample = (i: number, j: number) => Math.round(1000 * Math.sin((2 * Math.PI * (j - i / 4)) / 20)) + i;

export function line2d(opts: { cdpXByte?: number; cdpYByte?: number } = {}): Buffer {
  const xb = opts.cdpXByte ?? 181;
  const yb = opts.cdpYByte ?? 185;
  return writeSegy({
    format: 5,
    text: 'C 1 TESSEL BASIN TB-2024 LINE TB-11 TEST COPY                                   C 2 TIME DOMAIN',
    sampleInterval: LINE.intervalUs,
    samplesPerTrace: LINE.samples,
    binary: [[3255, 2, 1]],
    traces: Array.from({ length: LINE.traces }, (_, i) => {
      const fields: Field[] = [
        [21, 4, 1001 + i],
        [71, 2, 0xfff6], // −10: divide by 10
        [109, 2, LINE.delayMs],
        [xb, 4, Math.round((LINE.x0 + i * LINE.spacingM) * 10)],
        [yb, 4, LINE.y0 * 10],
      ];
      if (i === LINE.oddIntervalTrace) fields.push([117, 2, 2000]);
      return { fields, samples: Array.from({ length: LINE.samples }, (_, j) => lineSample(i, j)) };
    }),
  });
}

/** A 3D cube: inlines 10–13 × crosslines 100–104, 50 samples, IBM float (format 1), 2 ms; positions 25 m apart. */
export const CUBE = { inlines: [10, 11, 12, 13], crosslines: [100, 101, 102, 103, 104], samples: 50, intervalUs: 2000, spacingM: 25 };
export const cubeSample = (il: number, xl: number, j: number) => (il - 10) * 100 + (xl - 100) * 10 + j / 4; // exact in IBM float

/** Inline/crossline at the standard bytes (189/193), or at 9/13 (then the upload must say so). */
export function cube3d(opts: { ilXlAt?: 'standard' | 'elsewhere' | 'none' } = {}): Buffer {
  const at = opts.ilXlAt ?? 'standard';
  const traces = [];
  for (const il of CUBE.inlines) {
    for (const xl of CUBE.crosslines) {
      const fields: Field[] = [
        [21, 4, il * 1000 + xl],
        [71, 2, 1],
        [181, 4, 1000 + (xl - 100) * CUBE.spacingM],
        [185, 4, 2000 + (il - 10) * CUBE.spacingM],
      ];
      if (at === 'standard') fields.push([189, 4, il], [193, 4, xl]);
      if (at === 'elsewhere') fields.push([9, 4, il], [13, 4, xl]);
      traces.push({ fields, samples: Array.from({ length: CUBE.samples }, (_, j) => cubeSample(il, xl, j)) });
    }
  }
  return writeSegy({ format: 1, sampleInterval: CUBE.intervalUs, samplesPerTrace: CUBE.samples, binary: [[3255, 2, 1]], traces });
}

/**
 * A tiny 2D line whose every byte is below 0x80 (ASCII textual header, int16
 * samples, small numbers), so it survives being sent as text (the
 * authorization matrix's multipart helper sends text files).
 */
export function asciiSegyLine(): string {
  const b = writeSegy({
    format: 3,
    ebcdic: false,
    text: 'C 1 TESSEL BASIN TB-2024 MATRIX LINE',
    sampleInterval: 256,
    samplesPerTrace: 4,
    traces: [0, 1, 2, 3].map((i) => ({ fields: [[21, 4, 1 + i], [71, 2, 1], [181, 4, 10 + 5 * i], [185, 4, 20]] as Field[], samples: [i, 2 * i, 3, 4] })),
  });
  if (b.some((v) => v >= 0x80)) throw new Error('asciiSegyLine: a byte is not ASCII');
  return b.toString('latin1');
}

type App = Parameters<typeof request>[0];

/** Upload a SEG-Y file through the API; returns the upload id and the 2D section id (null for 3D). */
export async function uploadSegyVia(app: App, token: string, projectId: number, file: Buffer, fields: Record<string, string> = {}): Promise<{ uploadId: number; sectionId: number | null }> {
  let r = request(app).post(`/api/projects/${projectId}/segy`).set({ Authorization: `Bearer ${token}` });
  for (const [k, v] of Object.entries({ title: 'TB-11 SEG-Y', lineName: 'TB-11', survey: 'TB-2024', ...fields })) r = r.field(k, v);
  const res = await r.attach('file', file, 'tb.sgy');
  if (res.status !== 202) throw new Error(`SEG-Y upload failed: ${res.status} ${JSON.stringify(res.body)}`);
  return { uploadId: res.body.upload.id, sectionId: res.body.section?.id ?? null };
}

/** Wait until a section leaves `processing`. */
export async function sectionSettled(app: App, token: string, id: number, timeoutMs = 45_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const r = await request(app).get(`/api/sections/${id}`).set({ Authorization: `Bearer ${token}` });
    if (r.body.status !== 'processing') return r.body;
    if (Date.now() > until) throw new Error(`section ${id} still processing`);
    await new Promise((res) => setTimeout(res, 200));
  }
}

let matrixMemo: Promise<{ cube: number; section: number }> | null = null;
/** For the authorization matrix: one 3D upload and one ready 2D SEG-Y section in a project (made once per app). */
export function matrixSegy(app: App, token: string, projectId: number): Promise<{ cube: number; section: number }> {
  matrixMemo ??= (async () => {
    const cube = (await uploadSegyVia(app, token, projectId, cube3d())).uploadId;
    const { sectionId } = await uploadSegyVia(app, token, projectId, line2d());
    await sectionSettled(app, token, sectionId!);
    return { cube, section: sectionId! };
  })();
  return matrixMemo;
}
