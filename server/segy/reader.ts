/**
 * Streaming SEG-Y reader: revision 0/1 (SEG, 2002) and 2.0/2.1 (SEG, 2017,
 * 2023). Byte positions per references.md and fields.ts.
 *
 * Feed it any async iterable of byte chunks (a Node readable stream, an
 * upload in flight); it yields the file header once and then one trace at a
 * time, never holding the file.
 *
 * Memory bound: the reader pulls a chunk only when it lacks bytes for the
 * next unit (the 3600-byte file header, one 3200-byte extended textual
 * header, one 240-byte trace header or one trace's samples), so the bytes it
 * holds never exceed `largest unit + 2 × largest chunk` (one chunk partly
 * consumed plus one just pulled). The largest unit is at most
 * `max(3600, ns × bytes per sample)` with ns ≤ `maxSamples` (default
 * 1,000,000, so ≤ 8 MB for 8-byte formats); with 64 KiB stream chunks and a
 * typical 1,500-sample float trace that is about 135 KB. `maxBufferedBytes`
 * records the peak, and `memoryBound()` the bound for the chunks seen.
 * The decoded trace (`read`: a new float64 array, 8 bytes a sample;
 * `readFloat32`: one float32 array reused for every trace) is the caller's.
 */
import { decodeEbcdic } from './ebcdic';
import { SegyError } from './errors';
import {
  BINARY_FIELD, BINARY_HEADER_FIELDS, OVERRIDABLE_DEFAULTS, TRACE_FIELD, TRACE_HEADER_FIELDS, TRACE_HEADER_BYTES,
  bytesLabel, readField, type OverridableField,
} from './fields';
import { FORMAT_CODES, SAMPLE_FORMATS, decodeSamples, decodeSamplesF32, type SampleFormat } from './formats';

export interface SegyReadOptions {
  /** Total file size when known (an upload's length): lets the reader refuse a file whose traces do not divide it before reading them. */
  fileSize?: number;
  /** 1-based trace header byte positions of 4-byte integers, for files that put these fields elsewhere. */
  overrides?: Partial<Record<OverridableField, number>>;
  /** Largest samples per trace accepted (default 1,000,000). */
  maxSamples?: number;
  /** Largest sample interval accepted, in the file's units (µs for time; default 100,000 = 0.1 s). */
  maxInterval?: number;
}

export interface SegyFileHeader {
  textual: string;
  textualEncoding: 'ebcdic' | 'ascii';
  extendedTextual: string[];
  /** Every binary header field of fields.ts by key. */
  binary: Record<string, number>;
  littleEndian: boolean;
  revision: { major: number; minor: number };
  format: SampleFormat;
  /** Samples per trace (binary header, rev 2 extended field, or the first trace header when the binary header has 0). */
  samplesPerTrace: number;
  /** Sample interval in the file's units (µs for time data). */
  sampleInterval: number;
  /** False only for rev ≥ 2 files whose fixed-length flag (3503–3504) is 0: each trace's length is then its own header's 115–116. */
  fixedLength: boolean;
  /** Byte offset of the first trace header. */
  dataStart: number;
  /** Number of traces when the file size or rev 2's count (3513–3520) tells it. */
  traceCount: number | null;
  /**
   * The value of bytes 3297–3300 when it was neither byte order constant nor 0
   * in a file before revision 2, where those bytes are unassigned (SEG-Y rev 1,
   * 3261–3500): left aside, the byte order read from the format code.
   */
  byteOrderIgnored?: number;
}

export interface SegyTrace<S extends Float64Array | Float32Array = Float64Array> {
  index: number;
  /** Byte offset of the trace header in the file. */
  offset: number;
  /** Every trace header field of fields.ts by key (cdpX, cdpY, inline, crossline from the overridden positions when given). */
  header: Record<string, number>;
  /** A new float64 array per trace from `read`; from `readFloat32` one float32 array reused for every trace (copy what you keep). */
  samples: S;
  /** The trace header's 240 bytes as in the file (a buffer reused for the next trace: copy what you keep). */
  rawHeader: Buffer;
}

const END_TEXT = '((SEG: ENDTEXT))';

const GETTER: Record<string, string> = { int8: 'getInt8', uint8: 'getUint8', int16: 'getInt16', uint16: 'getUint16', int32: 'getInt32', uint32: 'getUint32', float64: 'getFloat64' };
/**
 * All trace header fields as one object literal built by a function compiled
 * once from TRACE_HEADER_FIELDS (same result as readField per field, but the
 * object gets one fixed shape: several times faster on large files).
 */
if (TRACE_HEADER_FIELDS.some((f) => !GETTER[f.type])) throw new Error('trace header field type without a DataView getter');
const parseTraceFields = new Function('v', 'le', `return { ${TRACE_HEADER_FIELDS.map((f) => `${f.key}: v.${GETTER[f.type]}(${f.byte - 1}, le)`).join(', ')} };`) as (v: DataView, le: boolean) => Record<string, number>;


/** Fraction of bytes that are printable text in ASCII and in EBCDIC (cp037). */
function textScores(bytes: Uint8Array): { ascii: number; ebcdic: number } {
  let ascii = 0;
  let ebcdic = 0;
  const decoded = decodeEbcdic(bytes);
  for (let i = 0; i < bytes.length; i++) {
    const b = bytes[i];
    if (b === 0 || b === 10 || b === 13 || (b >= 0x20 && b < 0x7f)) ascii++;
    const c = decoded.charCodeAt(i);
    if (c === 0 || c === 10 || c === 13 || (c >= 0x20 && c < 0x7f) || c >= 0xa0) ebcdic++;
  }
  return { ascii: ascii / bytes.length, ebcdic: ebcdic / bytes.length };
}

function decodeText(bytes: Uint8Array): { text: string; encoding: 'ebcdic' | 'ascii'; isText: boolean } {
  const s = textScores(bytes);
  // An all-zero block counts as ASCII. EBCDIC wins only when it reads better (letters and spaces are 0x40–0xF9 there).
  const encoding = s.ebcdic > s.ascii ? 'ebcdic' : 'ascii';
  const text = encoding === 'ebcdic' ? decodeEbcdic(bytes) : Buffer.from(bytes).toString('latin1');
  return { text, encoding, isText: Math.max(s.ascii, s.ebcdic) >= 0.9 };
}

/** Whether bytes are all printable ASCII, tabs and line ends, with no zero byte: a binary header has zeros and small integers. */
function isPlainText(bytes: Uint8Array): boolean {
  for (const b of bytes) if (!(b === 9 || b === 10 || b === 13 || (b >= 0x20 && b < 0x7f))) return false;
  return true;
}

const fieldError = (code: string, key: string, table: 'binary' | 'trace', message: string, details: Record<string, unknown> = {}) => {
  const f = table === 'binary' ? BINARY_FIELD[key] : TRACE_FIELD[key];
  return new SegyError(code, key, table === 'binary' ? bytesLabel(f) : `trace header ${bytesLabel(f)}`, message, details);
};

/** Byte queue over an async iterator of chunks; copies what it hands out (so callers may swap bytes in place). */
class ByteQueue {
  private chunks: Buffer[] = [];
  private head = 0; // consumed bytes of chunks[0]
  private available = 0;
  private held = 0; // bytes of all retained chunks, consumed part included
  position = 0; // bytes consumed so far
  maxHeld = 0;
  maxChunk = 0;
  private done = false;
  constructor(private readonly it: AsyncIterator<Uint8Array>) {}

  /** Pulls chunks until `n` bytes are available; false at end of stream with fewer. */
  async need(n: number): Promise<boolean> {
    while (this.available < n && !this.done) {
      const r = await this.it.next();
      if (r.done) { this.done = true; break; }
      const c = Buffer.isBuffer(r.value) ? r.value : Buffer.from(r.value.buffer, r.value.byteOffset, r.value.byteLength);
      if (c.length === 0) continue;
      this.chunks.push(c);
      this.available += c.length;
      this.held += c.length;
      if (c.length > this.maxChunk) this.maxChunk = c.length;
      if (this.held > this.maxHeld) this.maxHeld = this.held;
    }
    return this.available >= n;
  }

  get availableBytes() { return this.available; }

  /** Consume `n` bytes (must be available), copied into `into` (or a new buffer). */
  take(n: number, into?: Buffer): Buffer {
    const out = into ?? Buffer.allocUnsafe(n);
    let filled = 0;
    while (filled < n) {
      const c = this.chunks[0];
      const k = Math.min(n - filled, c.length - this.head);
      c.copy(out, filled, this.head, this.head + k);
      filled += k;
      this.head += k;
      if (this.head === c.length) { this.chunks.shift(); this.held -= c.length; this.head = 0; }
    }
    this.available -= n;
    this.position += n;
    return out;
  }

  /** Discard `n` bytes (pulling as needed, a chunk at a time); false if the stream ends first. */
  async skip(n: number): Promise<boolean> {
    while (n > 0) {
      if (!(await this.need(1))) return false;
      const k = Math.min(n, this.available);
      this.take(k);
      n -= k;
    }
    return true;
  }
}

export class SegyReader {
  header: SegyFileHeader | null = null;
  private queue: ByteQueue | null = null;
  private largestUnit = 3600;
  constructor(private readonly opts: SegyReadOptions = {}) {
    for (const [k, v] of Object.entries(opts.overrides ?? {})) {
      if (v !== undefined && (!Number.isInteger(v) || v < 1 || v > TRACE_HEADER_BYTES - 3)) {
        throw new SegyError('segy_override', k, 'override', `byte position must be an integer from 1 to ${TRACE_HEADER_BYTES - 3} (a 4-byte integer inside the 240-byte trace header), got ${v}`);
      }
    }
  }

  /** Peak bytes held from the input so far. */
  get maxBufferedBytes(): number { return this.queue?.maxHeld ?? 0; }

  /** The documented bound for this input: largest unit + 2 × largest chunk seen. */
  memoryBound(): number { return this.largestUnit + 2 * (this.queue?.maxChunk ?? 0); }

  /** Read the whole stream: the header (also kept in `this.header`), then each trace, its samples exact in float64. */
  read(source: AsyncIterable<Uint8Array>): AsyncGenerator<SegyTrace, void, undefined> {
    return this.traces(source, (bytes, h, ns) => decodeSamples(bytes, h.format.code, ns, h.littleEndian));
  }

  /**
   * As `read`, with the samples as float32 (Cayline's stored form, each value
   * rounded once) in one array reused from trace to trace: no allocation per
   * trace, for the upload's one pass over a large file.
   */
  readFloat32(source: AsyncIterable<Uint8Array>): AsyncGenerator<SegyTrace<Float32Array>, void, undefined> {
    let out = new Float32Array(0);
    return this.traces(source, (bytes, h, ns) => {
      if (out.length !== ns) out = new Float32Array(ns);
      return decodeSamplesF32(bytes, h.format.code, ns, h.littleEndian, out);
    });
  }

  private async *traces<S extends Float64Array | Float32Array>(source: AsyncIterable<Uint8Array>, decode: (bytes: Buffer, h: SegyFileHeader, ns: number) => S): AsyncGenerator<SegyTrace<S>, void, undefined> {
    const q = new ByteQueue(source[Symbol.asyncIterator]());
    this.queue = q;
    if (!(await q.need(3600))) {
      throw fieldError('segy_truncated', 'formatCode', 'binary', `file ends after ${q.availableBytes} bytes, before the end of the 400-byte binary header (bytes 3201–3600); a SEG-Y file starts with 3600 header bytes`, { size: q.availableBytes });
    }
    const head = q.take(3600);
    const header = this.parseFileHeader(head);

    // Extended textual headers (rev 1: count at 3505–3506; −1 = variable, ended by an EndText stanza).
    const ext = header.binary.extendedTextualHeaders;
    const count = header.revision.major >= 1 ? ext : 0;
    if (count < -1) throw fieldError('segy_bad_header', 'extendedTextualHeaders', 'binary', `must be −1 or ≥ 0, got ${count}`);
    for (let i = 0; count === -1 ? i < 10_000 : i < count; i++) {
      if (!(await q.need(3200))) throw fieldError('segy_truncated', 'extendedTextualHeaders', 'binary', `file ends inside extended textual header ${i + 1} of ${count === -1 ? 'a variable number' : count}`);
      const { text } = decodeText(q.take(3200));
      header.extendedTextual.push(text);
      if (count === -1 && text.toUpperCase().includes(END_TEXT)) break;
    }
    header.dataStart = 3600 + 3200 * header.extendedTextual.length;
    const firstOffset = header.revision.major >= 2 ? header.binary.firstTraceOffset : 0;
    if (firstOffset > 0) {
      if (firstOffset < header.dataStart) throw fieldError('segy_bad_header', 'firstTraceOffset', 'binary', `first trace at byte ${firstOffset} would overlap the headers ending at ${header.dataStart}`);
      if (!(await q.skip(firstOffset - header.dataStart))) throw fieldError('segy_truncated', 'firstTraceOffset', 'binary', `file ends before the first trace at byte ${firstOffset}`);
      header.dataStart = firstOffset;
    }
    this.header = header;

    const maxSamples = this.opts.maxSamples ?? 1_000_000;
    const maxInterval = this.opts.maxInterval ?? 100_000;
    const bps = header.format.bytes;
    const ov = { ...OVERRIDABLE_DEFAULTS, ...this.opts.overrides };
    const limit = header.revision.major >= 2 && header.binary.tracesInFile > 0 ? header.binary.tracesInFile : Infinity;
    const hb = Buffer.allocUnsafe(TRACE_HEADER_BYTES);
    let scratch = Buffer.alloc(0);
    for (let index = 0; index < limit; index++) {
      const offset = q.position;
      if (!(await q.need(TRACE_HEADER_BYTES))) {
        if (q.availableBytes === 0 && limit === Infinity) return;
        if (q.availableBytes === 0) throw fieldError('segy_truncated', 'tracesInFile', 'binary', `file ends after ${index} traces, the header says ${limit}`);
        throw fieldError('segy_truncated', 'samples', 'trace', `file ends inside the 240-byte header of trace ${index + 1} (${q.availableBytes} of 240 bytes present)`, { trace: index + 1 });
      }
      q.take(TRACE_HEADER_BYTES, hb);
      const th = this.parseTraceHeader(hb, header.littleEndian, ov);
      if (index === 0) this.settleFirstTrace(header, th, maxSamples, maxInterval);
      let ns = header.samplesPerTrace;
      if (!header.fixedLength) {
        ns = th.samples;
        if (ns < 1 || ns > maxSamples) throw fieldError('segy_bad_header', 'samples', 'trace', `trace ${index + 1} has ${ns} samples; expected 1 to ${maxSamples}`, { trace: index + 1, value: ns });
      }
      const n = ns * bps;
      if (n > this.largestUnit) this.largestUnit = n;
      if (!(await q.need(n))) {
        throw fieldError('segy_truncated', header.fixedLength ? 'samplesPerTrace' : 'samples', header.fixedLength ? 'binary' : 'trace',
          `file ends inside trace ${index + 1}: ${q.availableBytes} of its ${n} sample bytes present (${ns} samples × ${bps} bytes, format ${header.format.code})`, { trace: index + 1 });
      }
      if (scratch.length < n) scratch = Buffer.alloc(n); // reused: the decoders copy out of it
      const samples = decode(q.take(n, scratch.subarray(0, n)), header, ns);
      yield { index, offset, header: th, samples, rawHeader: hb };
    }
  }

  private parseFileHeader(head: Buffer): SegyFileHeader {
    const textualBytes = head.subarray(0, 3200);
    const { text, encoding, isText } = decodeText(textualBytes);
    const view = new DataView(head.buffer, head.byteOffset + 3200, 400);
    const fmtBE = view.getInt16(3225 - 3201, false);
    const fmtLE = view.getInt16(3225 - 3201, true);
    const order = view.getUint32(3297 - 3201, false);
    // The revision is one byte each (3501 major, 3502 minor), so it reads alike in either byte order and is known
    // before it. Writers that store it as one 16-bit number in a little-endian file, or as a plain 1 or 2, leave 0 in the major byte.
    let major = head[3500];
    let minor = head[3501];
    if (major === 0 && (minor === 1 || minor === 2)) { major = minor; minor = 0; }
    const orderHex = `0x${order.toString(16).padStart(8, '0')}`;
    let little: boolean;
    let byteOrderIgnored: number | undefined;
    // Before rev 2 files are big-endian; a file without the constant whose format code only makes sense byte-swapped is read little-endian (common practice of writers that omit the constant).
    const fromFormatCode = () => !FORMAT_CODES.includes(fmtBE) && FORMAT_CODES.includes(fmtLE);
    if (order === 0x01020304) little = false;
    else if (order === 0x04030201) little = true;
    else if (order === 0) little = fromFormatCode();
    else if (!isText) {
      throw new SegyError('segy_not_segy', 'textual', 'bytes 1–3200', `not a SEG-Y file: the textual header is neither EBCDIC nor ASCII text and the byte order constant (bytes 3297–3300) is ${orderHex}`);
    } else if (isPlainText(head.subarray(3200, 3600))) {
      throw new SegyError('segy_not_segy', 'binary', 'bytes 3201–3600', 'not a SEG-Y file: the 400 bytes where the binary header belongs are text (a text file, not SEG-Y?)');
    } else if (major < 2) {
      // SEG-Y rev 0/1 leave bytes 3261–3500 unassigned, and writers of those revisions leave what they like there
      little = fromFormatCode();
      byteOrderIgnored = order;
    } else {
      throw fieldError('segy_bad_header', 'byteOrder', 'binary', `byte order constant is ${orderHex}; expected 0x01020304 (big-endian), 0x04030201 (little-endian) or 0`);
    }
    const binary: Record<string, number> = {};
    for (const f of BINARY_HEADER_FIELDS) binary[f.key] = readField(view, f, 3201, little);
    const fmt = binary.formatCode;
    if (!FORMAT_CODES.includes(fmt)) {
      if (!isText) throw new SegyError('segy_not_segy', 'textual', 'bytes 1–3200', `not a SEG-Y file: the textual header is neither EBCDIC nor ASCII text and the data sample format code (bytes 3225–3226) is ${fmt}`);
      throw fieldError('segy_bad_format', 'formatCode', 'binary', `data sample format code ${fmt} is not one of ${FORMAT_CODES.join(', ')}`, { value: fmt });
    }
    const format = SAMPLE_FORMATS[fmt];
    let samplesPerTrace = binary.samplesPerTrace;
    let sampleInterval = binary.sampleInterval;
    if (major >= 2 && binary.extSamplesPerTrace > 0) samplesPerTrace = binary.extSamplesPerTrace;
    if (major >= 2 && binary.extSampleInterval > 0) sampleInterval = binary.extSampleInterval;
    if (major >= 2 && binary.maxAdditionalTraceHeaders > 0) {
      throw fieldError('segy_unsupported', 'maxAdditionalTraceHeaders', 'binary', `additional trace headers (${binary.maxAdditionalTraceHeaders}) are not supported`);
    }
    return {
      textual: text, textualEncoding: encoding, extendedTextual: [], binary, littleEndian: little,
      revision: { major, minor }, format, samplesPerTrace, sampleInterval,
      fixedLength: !(major >= 2 && binary.fixedLengthTraces === 0),
      dataStart: 3600, traceCount: null,
      ...(byteOrderIgnored !== undefined ? { byteOrderIgnored } : {}),
    };
  }

  private parseTraceHeader(hb: Buffer, little: boolean, ov: Record<OverridableField, number>): Record<string, number> {
    const view = new DataView(hb.buffer, hb.byteOffset, TRACE_HEADER_BYTES);
    const th = parseTraceFields(view, little);
    for (const k of Object.keys(OVERRIDABLE_DEFAULTS) as OverridableField[]) th[k] = view.getInt32(ov[k] - 1, little);
    return th;
  }

  /** Samples per trace and interval fall back to the first trace header when the binary header has 0; checks them and the file size. */
  private settleFirstTrace(h: SegyFileHeader, th: Record<string, number>, maxSamples: number, maxInterval: number) {
    if (h.samplesPerTrace === 0 && h.fixedLength) {
      if (th.samples === 0) throw fieldError('segy_bad_header', 'samplesPerTrace', 'binary', 'samples per trace is 0 here and in the first trace header (bytes 115–116)');
      h.samplesPerTrace = th.samples;
    }
    if (h.fixedLength && (h.samplesPerTrace < 1 || h.samplesPerTrace > maxSamples)) {
      throw fieldError('segy_bad_header', 'samplesPerTrace', 'binary', `${h.samplesPerTrace} samples per trace; expected 1 to ${maxSamples}`, { value: h.samplesPerTrace });
    }
    if (h.sampleInterval === 0) h.sampleInterval = th.sampleInterval;
    if (!(h.sampleInterval > 0) || h.sampleInterval > maxInterval) {
      throw fieldError('segy_bad_header', 'sampleInterval', 'binary', `sample interval ${h.sampleInterval} (first trace header bytes 117–118: ${th.sampleInterval}); expected more than 0 and at most ${maxInterval}`, { value: h.sampleInterval });
    }
    const size = this.opts.fileSize;
    const traceBytes = TRACE_HEADER_BYTES + h.samplesPerTrace * h.format.bytes;
    if (h.fixedLength && h.revision.major >= 2 && h.binary.tracesInFile > 0) h.traceCount = h.binary.tracesInFile;
    if (h.fixedLength && size !== undefined) {
      const rest = size - h.dataStart - (h.revision.major >= 2 ? Math.max(0, h.binary.trailerStanzas) * 3200 : 0);
      if (h.traceCount !== null) {
        if (rest < h.traceCount * traceBytes) throw fieldError('segy_truncated', 'tracesInFile', 'binary', `${h.traceCount} traces of ${traceBytes} bytes need ${h.traceCount * traceBytes} bytes after the headers; the file has ${rest}`);
      } else if (rest % traceBytes !== 0) {
        throw fieldError('segy_trace_count', 'samplesPerTrace', 'binary',
          `the ${rest} bytes after the headers are not a whole number of traces of ${traceBytes} bytes (240-byte header + ${h.samplesPerTrace} samples × ${h.format.bytes} bytes of format ${h.format.code} at bytes 3225–3226): ${(rest / traceBytes).toFixed(3)} traces`,
          { bytesAfterHeaders: rest, traceBytes });
      } else h.traceCount = rest / traceBytes;
    }
  }
}

/** Read a whole stream into memory-light results: the header and every trace through `onTrace`. */
export async function readSegy(source: AsyncIterable<Uint8Array>, onTrace: (t: SegyTrace, h: SegyFileHeader) => void, opts: SegyReadOptions = {}): Promise<{ header: SegyFileHeader; traces: number; reader: SegyReader }> {
  const reader = new SegyReader(opts);
  let traces = 0;
  for await (const t of reader.read(source)) {
    onTrace(t, reader.header!);
    traces++;
  }
  if (!reader.header) throw new Error('unreachable: header missing after read');
  return { header: reader.header, traces, reader };
}
