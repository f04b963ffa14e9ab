/** Streaming behaviour and revision 1/2 structure of the SEG-Y reader. */
import { describe, expect, it } from 'vitest';
import { SegyReader, type SegyTrace } from '../../../server/segy/reader';
import { chunked, segyHead, segyTrace, writeSegy, type WriterInput } from '../../helpers/segy-writer';

async function readAll(bytes: Buffer, opts: ConstructorParameters<typeof SegyReader>[0] = {}, chunk = 777) {
  const reader = new SegyReader(opts);
  const traces: SegyTrace[] = [];
  for await (const t of reader.read(chunked(bytes, chunk))) traces.push(t);
  return { header: reader.header!, traces, reader };
}

describe('bounded memory', () => {
  it('holds at most the largest unit + 2 chunks while reading a 160 MB generated stream', async () => {
    const ns = 1500;
    const spec = { format: 5 as const, sampleInterval: 2000 };
    const head = segyHead({ ...spec, samplesPerTrace: ns });
    const trace = segyTrace(spec, { fields: [[21, 4, 1]], samples: Array.from({ length: ns }, (_, k) => Math.sin(k / 10)) });
    const traces = Math.ceil(160e6 / trace.length);
    const chunk = 65536;
    // Generated on the fly in 64 KiB chunks, like a network upload: the stream itself never exists whole.
    async function* source() {
      let pending = Buffer.from(head);
      for (let i = 0; i < traces; i++) {
        pending = Buffer.concat([pending, trace]);
        while (pending.length >= chunk) { yield pending.subarray(0, chunk); pending = pending.subarray(chunk); }
      }
      if (pending.length) yield pending;
    }
    const reader = new SegyReader();
    let n = 0; let sum = 0;
    for await (const t of reader.read(source())) { n++; sum += t.samples[10]; }
    expect(n).toBe(traces);
    expect(sum).toBeCloseTo(traces * Math.fround(Math.sin(1)), 3);
    const bound = Math.max(3600, ns * 4) + 2 * chunk;
    expect(reader.memoryBound()).toBe(bound);
    expect(reader.maxBufferedBytes).toBeLessThanOrEqual(bound);
    expect(reader.maxBufferedBytes).toBeLessThan(traces * trace.length / 1000);
  });
});

describe('structure', () => {
  const base = (over: Partial<WriterInput> = {}): WriterInput => ({
    format: 5, sampleInterval: 1000, samplesPerTrace: 4,
    traces: [0, 1, 2].map((i) => ({ fields: [[21, 4, 10 + i]], samples: [i, i + 0.5, -i, 2] })), ...over,
  });

  it('reads ASCII textual headers and counted extended textual headers (rev 1, 3505–3506)', async () => {
    const { header, traces } = await readAll(writeSegy(base({ ebcdic: false, text: 'C 1 KESTREL KNOLL TB-11', binary: [[3501, 1, 1], [3505, 2, 2]], extendedText: ['((SEG: Location Data ver 1.0))', 'MARROW BANK'] })));
    expect(header.textualEncoding).toBe('ascii');
    expect(header.textual.startsWith('C 1 KESTREL KNOLL TB-11')).toBe(true);
    expect(header.extendedTextual.map((t) => t.trim())).toEqual(['((SEG: Location Data ver 1.0))', 'MARROW BANK']);
    expect(header.dataStart).toBe(3600 + 6400);
    expect(traces.map((t) => t.header.cdp)).toEqual([10, 11, 12]);
  });

  it('reads a variable number of extended textual headers ended by EndText (count −1)', async () => {
    const { header, traces } = await readAll(writeSegy(base({ binary: [[3501, 1, 2], [3505, 2, 0xffff]], extendedText: ['((SEG: Something ver 1.0))', '((SEG: EndText))'] })));
    expect(header.extendedTextual).toHaveLength(2);
    expect(traces).toHaveLength(3);
  });

  it('ignores the extended count in a revision 0 file', async () => {
    const { header, traces } = await readAll(writeSegy(base({ binary: [[3505, 2, 3]] })));
    expect(header.extendedTextual).toHaveLength(0);
    expect(traces).toHaveLength(3);
  });

  it('reads little-endian rev 2 files by the byte order constant, in the rev 2 formats', async () => {
    for (const [format, values] of [[6, [Math.PI, -1e-300]], [10, [4294967295, 0]], [11, [65535, 1]], [16, [255, 3]]] as const) {
      const bytes = writeSegy({ format, little: true, sampleInterval: 500, samplesPerTrace: 2, binary: [[3297, 4, 0x01020304], [3501, 1, 2]], traces: [{ fields: [[189, 4, 42]], samples: values }] });
      const { header, traces } = await readAll(bytes, { fileSize: bytes.length });
      expect(header.littleEndian).toBe(true);
      expect(header.revision.major).toBe(2);
      expect(traces[0].header.inline).toBe(42);
      expect([...traces[0].samples]).toEqual(values);
    }
  });

  it('reads variable-length traces only where rev 2 allows it (fixed-length flag 0)', async () => {
    const traces = [{ samples: [1, 2] }, { samples: [3, 4, 5, 6] }, { samples: [7] }];
    const v2 = await readAll(writeSegy({ format: 3, sampleInterval: 1000, samplesPerTrace: 0, binary: [[3501, 1, 2], [3503, 2, 0]], traces }));
    expect(v2.header.fixedLength).toBe(false);
    expect(v2.traces.map((t) => [...t.samples])).toEqual([[1, 2], [3, 4, 5, 6], [7]]);
    // Revision 1 with the same flag: fixed length from the binary header, so the same bytes do not parse as 3 traces.
    const bytes = writeSegy({ format: 3, sampleInterval: 1000, samplesPerTrace: 2, binary: [[3501, 1, 1], [3503, 2, 0]], traces });
    await expect(readAll(bytes, { fileSize: bytes.length })).rejects.toThrow(/not a whole number of traces/);
  });

  it('skips to rev 2 first-trace offset (3521–3528) and stops at its trace count (3513–3520), leaving trailers alone', async () => {
    const head = segyHead({ format: 5, sampleInterval: 1000, samplesPerTrace: 2, binary: [[3501, 1, 2], [3503, 2, 1], [3513, 8, 2], [3521, 8, 3700], [3529, 4, 1]] });
    const t = (v: number) => segyTrace({ format: 5, sampleInterval: 1000 }, { samples: [v, v] });
    const bytes = Buffer.concat([head, Buffer.alloc(100, 0x40), t(1), t(2), Buffer.alloc(3200, 0x40)]);
    const { traces, header } = await readAll(bytes, { fileSize: bytes.length });
    expect(header.dataStart).toBe(3700);
    expect(header.traceCount).toBe(2);
    expect(traces.map((x) => x.samples[0])).toEqual([1, 2]);
  });

  it('falls back to the first trace header for samples and interval when the binary header has 0', async () => {
    const bytes = writeSegy({ ...base(), samplesPerTrace: 0, sampleInterval: 0, traces: [{ fields: [[117, 2, 2000]], samples: [1, 2, 3, 4] }] });
    const { header, traces } = await readAll(bytes);
    expect(header.samplesPerTrace).toBe(4);
    expect(header.sampleInterval).toBe(2000);
    expect([...traces[0].samples]).toEqual([1, 2, 3, 4]);
  });

  it('reads CDP X/Y, inline and crossline from overridden byte positions', async () => {
    const bytes = writeSegy(base({ traces: [{ fields: [[73, 4, 111], [77, 4, 222], [9, 4, 5], [17, 4, 6], [181, 4, 9]], samples: [0, 0, 0, 0] }] }));
    const { traces } = await readAll(bytes, { overrides: { cdpX: 73, cdpY: 77, inline: 9, crossline: 17 } });
    expect([traces[0].header.cdpX, traces[0].header.cdpY, traces[0].header.inline, traces[0].header.crossline]).toEqual([111, 222, 5, 6]);
  });

  it('gives the same result whatever the chunking of the stream', async () => {
    const bytes = writeSegy(base({ format: 1, traces: Array.from({ length: 20 }, (_, i) => ({ samples: [i, -i / 8, 0.25, 1e5] })) }));
    const a = await readAll(bytes, {}, 1);
    const b = await readAll(bytes, {}, 1 << 20);
    expect(a.traces.map((t) => [...t.samples])).toEqual(b.traces.map((t) => [...t.samples]));
    expect(a.traces[3].samples[1]).toBe(-3 / 8);
  });
});
