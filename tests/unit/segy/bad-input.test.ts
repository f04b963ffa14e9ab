/** Refusals of the SEG-Y reader: each names the header field and its byte positions. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { SegyError } from '../../../server/segy/errors';
import { ingestSegy } from '../../../server/segy/ingest';
import { GeometryCollector, summariseGeometry } from '../../../server/segy/geometry';
import { SegyReader } from '../../../server/segy/reader';
import { chunked, writeSegy, type WriterInput } from '../../helpers/segy-writer';

const line = (over: Partial<WriterInput> = {}): WriterInput => ({
  format: 5, sampleInterval: 4000, samplesPerTrace: 10,
  traces: Array.from({ length: 5 }, (_, i) => ({ fields: [[21, 4, 100 + i], [181, 4, 1000 * i], [185, 4, 0]], samples: Array(10).fill(i) })),
  ...over,
});

async function refusal(bytes: Buffer, opts: ConstructorParameters<typeof SegyReader>[0] = {}): Promise<SegyError> {
  const reader = new SegyReader(opts);
  try {
    for await (const _ of reader.read(chunked(bytes, 1000))) { /* drain */ }
  } catch (e) {
    if (e instanceof SegyError) return e;
    throw e;
  }
  throw new Error('the reader accepted the file');
}

describe('bad SEG-Y input', () => {
  it('a file shorter than the 3600 header bytes', async () => {
    const e = await refusal(writeSegy(line()).subarray(0, 2000));
    expect(e.code).toBe('segy_truncated');
    expect(e.message).toContain('bytes 3201–3600');
  });

  it('a file cut inside a trace, size unknown (streaming)', async () => {
    const b = writeSegy(line());
    const e = await refusal(b.subarray(0, b.length - 7));
    expect(e.code).toBe('segy_truncated');
    expect(e.message).toMatch(/samplesPerTrace \(bytes 3221–3222\): file ends inside trace 5/);
  });

  it('a file cut inside a trace header', async () => {
    const b = writeSegy(line());
    const e = await refusal(b.subarray(0, 3600 + 280 + 100));
    expect(e.message).toMatch(/trace header bytes 115–116\): file ends inside the 240-byte header of trace 2/);
  });

  it('a trace count that does not divide the file (size known up front)', async () => {
    const b = Buffer.concat([writeSegy(line()), Buffer.alloc(13)]);
    const e = await refusal(b, { fileSize: b.length });
    expect(e.code).toBe('segy_trace_count');
    expect(e.message).toContain('bytes 3221–3222');
    expect(e.message).toContain('not a whole number of traces of 280 bytes');
  });

  it('a format code outside the list', async () => {
    const e = await refusal(writeSegy({ ...line(), format: 4 as never, traces: [] }));
    expect(e.code).toBe('segy_bad_format');
    expect(e.message).toBe('formatCode (bytes 3225–3226): data sample format code 4 is not one of 1, 2, 3, 5, 6, 7, 8, 9, 10, 11, 12, 15, 16');
  });

  it('absurd sample counts', async () => {
    const zero = await refusal(writeSegy(line({ samplesPerTrace: 0, traces: [{ samples: [] }] })));
    expect(zero.message).toMatch(/^samplesPerTrace \(bytes 3221–3222\): samples per trace is 0/);
    const many = await refusal(writeSegy(line({ samplesPerTrace: 60000, traces: [{ samples: [1] }] })), { maxSamples: 50000 });
    expect(many.message).toMatch(/^samplesPerTrace \(bytes 3221–3222\): 60000 samples per trace; expected 1 to 50000/);
  });

  it('absurd sample intervals', async () => {
    const zero = await refusal(writeSegy(line({ sampleInterval: 0 })));
    expect(zero.message).toMatch(/^sampleInterval \(bytes 3217–3218\): sample interval 0/);
    const huge = await refusal(writeSegy(line({ sampleInterval: 65000 })), { maxInterval: 20000 });
    expect(huge.message).toMatch(/^sampleInterval \(bytes 3217–3218\): sample interval 65000/);
  });

  it('a file that is not SEG-Y at all', async () => {
    // An invented binary blob: PNG signature followed by pseudo-random bytes.
    const b = Buffer.alloc(8000);
    let s = 7;
    for (let i = 0; i < b.length; i++) { s = (s * 1103515245 + 12345) >>> 0; b[i] = s >>> 24; }
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]).copy(b);
    const e = await refusal(b);
    expect(e.code).toBe('segy_not_segy');
    expect(e.message).toMatch(/^textual \(bytes 1–3200\): not a SEG-Y file/);
  });

  it('a byte order constant that is neither order, in a revision 2 file', async () => {
    const e = await refusal(writeSegy(line({ binary: [[3297, 4, 0x02010403], [3501, 1, 2]] })));
    expect(e.message).toMatch(/^byteOrder \(bytes 3297–3300\): byte order constant is 0x02010403/);
  });

  it('before revision 2 the same bytes are unassigned (SEG-Y rev 1, 3261–3500): read by the format code, noted', async () => {
    for (const [rev, little] of [[0, false], [1, false], [1, true]] as const) {
      const bytes = writeSegy(line({ little, binary: [[3297, 4, 0x02010403], ...(rev ? [[3501, 1, rev] as [number, 1, number]] : [])] }));
      const reader = new SegyReader();
      const samples: number[] = [];
      for await (const t of reader.read(chunked(bytes, 1000))) samples.push(t.samples[0]);
      expect(samples).toEqual([0, 1, 2, 3, 4]);
      expect(reader.header!.littleEndian).toBe(little);
      expect(reader.header!.byteOrderIgnored).toBe(little ? 0x03040102 : 0x02010403);
    }
    // the upload keeps the file and says what it did in its warning list
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-segy-order-'));
    try {
      const r = await ingestSegy(chunked(writeSegy(line({ binary: [[3297, 4, 0x02010403], [3501, 1, 1]] })), 1000), dir);
      expect(r.traces).toBe(5);
      const w = r.warnings.find((x) => x.code === 'byte_order_ignored');
      expect(w).toMatchObject({ field: 'byteOrder', bytes: 'bytes 3297–3300' });
      expect(w!.message).toBe('bytes 3297–3300 hold 0x02010403, not a byte order constant; revision 1 leaves them unassigned, so the file was read big-endian by its format code');
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a text file: the binary header is text as well', async () => {
    const text = Buffer.from('x,y,twt\n'.repeat(600));
    const e = await refusal(text);
    expect(e.code).toBe('segy_not_segy');
    expect(e.message).toMatch(/^binary \(bytes 3201–3600\): not a SEG-Y file: the 400 bytes where the binary header belongs are text/);
  });

  it('a 3D file with no inline/crossline values (declared 3D, or positions covering an area)', async () => {
    const traces = [];
    for (let il = 0; il < 4; il++) for (let xl = 0; xl < 5; xl++) traces.push({ fields: [[181, 4, 500 + 25 * xl], [185, 4, 800 + 25 * il]] as Array<[number, 4, number]>, samples: [0, 1] });
    const bytes = writeSegy({ format: 5, sampleInterval: 4000, samplesPerTrace: 2, traces });
    const reader = new SegyReader();
    const g = new GeometryCollector();
    for await (const t of reader.read(chunked(bytes))) g.add(t.header);
    const e = (() => { try { summariseGeometry(reader.header!, g); } catch (err) { return err as SegyError; } throw new Error('accepted'); })();
    expect(e.code).toBe('segy_no_inline_crossline');
    expect(e.message).toMatch(/^inline \(trace header bytes 189–192 and 193–196\): a 3D file needs inline and crossline numbers/);
    // The same file declared 3D with the positions moved by the person: the message names the moved positions.
    const e2 = (() => { try { summariseGeometry(reader.header!, g, { dimension: '3d', overrides: { inline: 9, crossline: 13 } }); } catch (err) { return err as SegyError; } throw new Error('accepted'); })();
    expect(e2.message).toMatch(/^inline \(trace header bytes 9–12 and 13–16\)/);
    // A straight 2D line is not mistaken for it.
    const l = new SegyReader(); const g2 = new GeometryCollector();
    for await (const t of l.read(chunked(writeSegy(line())))) g2.add(t.header);
    expect(summariseGeometry(l.header!, g2).dimension).toBe('2d');
  });

  it('an override outside the trace header', () => {
    expect(() => new SegyReader({ overrides: { cdpX: 239 } })).toThrow(/cdpX \(override\): byte position must be an integer from 1 to 237/);
  });

  it('a rev 2 trace count larger than the file', async () => {
    const b = writeSegy(line({ binary: [[3501, 1, 2], [3503, 2, 1], [3513, 8, 9]] }));
    const e = await refusal(b, { fileSize: b.length });
    expect(e.message).toMatch(/^tracesInFile \(bytes 3513–3520\): 9 traces of 280 bytes need 2520 bytes/);
  });
});
