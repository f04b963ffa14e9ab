/**
 * Where the Trace tool's assist runs: `AssistBackend.run(task)` answers a
 * path / auto-extend / snap task (protocol.ts).
 *
 * - `WorkerAssistBackend` (the browser): full-resolution tiles of the open
 *   section are fetched through the client API (`loadSectionImage`, the same
 *   cache the tile renderer uses; the pyramid layout from viewport.ts) and
 *   handed to a Web Worker (traceAssist.worker.ts) that does the work. An
 *   auto-extend that ran into tiles not loaded yet is asked again after they
 *   arrive (at most 16 rounds).
 *   A SEG-Y section reads true amplitudes instead (blocks of 256 traces ×
 *   256 samples through GET /api/sections/:id/amplitudes).
 * - `LocalAssistBackend`: the same computation in-process over any
 *   AmplitudeSource (tests, or where `Worker` does not exist).
 *
 * `latest(run)` wraps a backend for previews: one task in flight, the newest
 * waiting one replaces older ones, superseded tasks resolve null (latest
 * wins), and `cancel()` drops the waiting one.
 */
import type { TilesDescriptor } from '../../../shared/schemas/sections';
import type { AmplitudeSource, Polarity } from '../../../shared/trace-assist/source';
import { loadSectionImage, tileUrl } from '../../api/sections';
import { pyramidOf } from '../tiles';
import { tilePlacement, visibleTileRange, type Pyramid } from '../viewport';
import { answerAssist, taskRect, type AssistReply, type AssistRequest, type AssistResult, type AssistTask, type PxRect } from './protocol';

export interface AssistBackend {
  run(task: AssistTask, signal?: AbortSignal): Promise<AssistResult>;
  dispose?(): void;
}

export class LocalAssistBackend implements AssistBackend {
  constructor(private readonly src: AmplitudeSource) {}
  async run(task: AssistTask): Promise<AssistResult> {
    return answerAssist(this.src, task).result;
  }
}

/** What the backend needs of a Worker (a fake in tests). */
export interface AssistWorkerLike {
  postMessage(msg: AssistRequest): void;
  onmessage: ((e: MessageEvent<AssistReply>) => void) | null;
  onerror: ((e: ErrorEvent) => void) | null;
  terminate(): void;
}

/** Read the section's polarity note: "positive … shown bright/white" → brightPositive; otherwise darkPositive (the demo sections' convention). */
export function polarityFromNote(note: string | null | undefined): Polarity {
  const t = (note ?? '').toLowerCase();
  if (/positive[^.;]*\b(bright|white|light)\b/.test(t) || /\b(bright|white|light)\b[^.;]*positive/.test(t)) return 'brightPositive';
  return 'darkPositive';
}

const MAX_ROUNDS = 16;

/** Blocks of true amplitudes a SEG-Y section's assist reads (traces × samples ≤ the API's 65,536). */
export const AMPLITUDE_TILE = 256;

/** Reads a block of true amplitudes: `values[t][s]` for traces trace…trace+traces−1, samples sample…. */
export type AmplitudeLoader = (w: { trace: number; sample: number; traces: number; samples: number }, signal?: AbortSignal) => Promise<number[][]>;

export interface WorkerAssistOptions {
  spawn?: () => AssistWorkerLike;
  load?: (url: string, signal?: AbortSignal) => Promise<ImageBitmap>;
  /**
   * A SEG-Y section: read true amplitudes (image pixel [u, v] is trace ⌊u⌋,
   * sample ⌊v⌋, as the section's amplitude readout) instead of the grey tiles.
   */
  amplitudes?: AmplitudeLoader;
}

export class WorkerAssistBackend implements AssistBackend {
  private worker: AssistWorkerLike | null = null;
  private readonly pyramid: Pyramid;
  private readonly spawn: () => AssistWorkerLike;
  private readonly load: (url: string, signal?: AbortSignal) => Promise<ImageBitmap>;
  private readonly amplitudes: AmplitudeLoader | null;
  private readonly sent = new Set<string>();
  private readonly loading = new Map<string, Promise<void>>();
  private readonly pending = new Map<number, { resolve: (r: AssistReply) => void; reject: (e: Error) => void }>();
  private seq = 0;
  readonly key: string;

  constructor(
    private readonly tiles: TilesDescriptor,
    private readonly polarity: Polarity,
    opts: WorkerAssistOptions = {},
  ) {
    this.spawn = opts.spawn ?? (() => new Worker(new URL('./traceAssist.worker.ts', import.meta.url), { type: 'module' }) as unknown as AssistWorkerLike);
    this.load = opts.load ?? loadSectionImage;
    this.amplitudes = opts.amplitudes ?? null;
    this.pyramid = pyramidOf(tiles);
    this.key = `${tiles.urlTemplate}|${tiles.width}x${tiles.height}|${this.amplitudes ? 'amplitude' : 'grey'}`;
  }

  /** True amplitudes (SEG-Y) rather than grey tiles. */
  get readsAmplitudes(): boolean {
    return this.amplitudes !== null;
  }

  private start(): AssistWorkerLike {
    if (this.worker) return this.worker;
    const w = this.spawn();
    w.onmessage = (e) => {
      const r = e.data;
      const p = this.pending.get(r.id);
      if (!p) return;
      this.pending.delete(r.id);
      p.resolve(r);
    };
    w.onerror = (e) => {
      const err = new Error(`The trace-assist worker failed: ${e.message ?? 'unknown error'}`);
      for (const p of this.pending.values()) p.reject(err);
      this.pending.clear();
      this.worker?.terminate();
      this.worker = null;
      this.sent.clear();
    };
    w.postMessage({
      type: 'section',
      key: this.key,
      width: this.tiles.width,
      height: this.tiles.height,
      tileSpan: this.amplitudes ? AMPLITUDE_TILE : this.tiles.tileSize,
      polarity: this.polarity,
    });
    this.worker = w;
    return w;
  }

  /** Fetch (through the client's tile cache) and send the full-resolution tiles covering `rect`. */
  async ensure(rect: PxRect, signal?: AbortSignal): Promise<void> {
    if (this.amplitudes) return this.ensureAmplitudes(rect, signal);
    const w = this.start();
    const p = this.pyramid;
    const level = p.maxLevel;
    const range = visibleTileRange(p, level, rect, 0);
    if (range.empty) return;
    const waits: Promise<void>[] = [];
    for (let row = range.row0; row <= range.row1; row++) {
      for (let col = range.col0; col <= range.col1; col++) {
        const k = `${col}/${row}`;
        if (this.sent.has(k)) continue;
        let l = this.loading.get(k);
        if (!l) {
          const url = tileUrl(this.tiles.urlTemplate, level, col, row);
          l = this.load(url, signal).then(
            (bitmap) => {
              const pl = tilePlacement(p, level, col, row);
              if (this.worker !== w) return;
              w.postMessage({ type: 'tile', key: this.key, col, row, x: pl.x, y: pl.y, width: pl.width, height: pl.height, bitmap });
              this.sent.add(k);
            },
            () => {
              /* a missing tile reads as "no pixels": the path avoids it */
            },
          );
          l.finally(() => this.loading.delete(k));
          this.loading.set(k, l);
        }
        waits.push(l);
      }
    }
    await Promise.all(waits);
  }

  /** Fetch and send the blocks of true amplitudes covering `rect`. */
  private async ensureAmplitudes(rect: PxRect, signal?: AbortSignal): Promise<void> {
    const w = this.start();
    const load = this.amplitudes!;
    const T = AMPLITUDE_TILE;
    const { width, height } = this.tiles;
    const c0 = Math.max(0, Math.floor(rect.x0 / T));
    const c1 = Math.min(Math.ceil(width / T) - 1, Math.floor((rect.x1 - 1) / T));
    const r0 = Math.max(0, Math.floor(rect.y0 / T));
    const r1 = Math.min(Math.ceil(height / T) - 1, Math.floor((rect.y1 - 1) / T));
    const waits: Promise<void>[] = [];
    for (let row = r0; row <= r1; row++) {
      for (let col = c0; col <= c1; col++) {
        const k = `${col}/${row}`;
        if (this.sent.has(k)) continue;
        let l = this.loading.get(k);
        if (!l) {
          const x = col * T;
          const y = row * T;
          const traces = Math.min(T, width - x);
          const samples = Math.min(T, height - y);
          l = load({ trace: x, sample: y, traces, samples }, signal).then(
            (v) => {
              if (this.worker !== w) return;
              const values = new Float32Array(traces * samples);
              for (let t = 0; t < traces; t++) {
                const tr = v[t] ?? [];
                for (let s = 0; s < samples; s++) values[s * traces + t] = tr[s] ?? NaN;
              }
              w.postMessage({ type: 'amplitudes', key: this.key, col, row, x, y, width: traces, height: samples, values });
              this.sent.add(k);
            },
            () => {
              /* not loaded: those pixels read as missing */
            },
          );
          l.finally(() => this.loading.delete(k));
          this.loading.set(k, l);
        }
        waits.push(l);
      }
    }
    await Promise.all(waits);
  }

  private ask(task: AssistTask): Promise<AssistReply> {
    const w = this.start();
    const id = ++this.seq;
    return new Promise<AssistReply>((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      w.postMessage({ type: 'task', id, task });
    });
  }

  async run(task: AssistTask, signal?: AbortSignal): Promise<AssistResult> {
    let rect = taskRect(task);
    if (task.kind === 'extend') rect = { ...rect, x0: rect.x0 - 896, x1: rect.x1 + 896, y0: rect.y0 - 192, y1: rect.y1 + 192 };
    await this.ensure(rect, signal);
    for (let round = 0; ; round++) {
      if (signal?.aborted) throw new DOMException('Trace assist was cancelled', 'AbortError');
      const r = await this.ask(task);
      if (!r.ok) throw new Error(r.message);
      if (!r.missing.length || round >= MAX_ROUNDS) return r.result;
      const before = this.sent.size;
      for (const m of r.missing) await this.ensure(m, signal);
      if (this.sent.size === before) return r.result; // nothing more to load (tiles failed)
    }
  }

  dispose(): void {
    this.worker?.terminate();
    this.worker = null;
    for (const p of this.pending.values()) p.reject(new Error('Trace assist was closed.'));
    this.pending.clear();
    this.sent.clear();
  }
}

/** Latest-wins runner for previews over a backend. */
export function latest(backend: AssistBackend) {
  let running = false;
  let waiting: { task: AssistTask; resolve: (r: AssistResult | null) => void } | null = null;
  let current = 0;
  const pump = (): void => {
    if (running || !waiting) return;
    const job = waiting;
    waiting = null;
    running = true;
    const mine = ++current;
    backend.run(job.task).then(
      (r) => {
        running = false;
        // superseded while running: a newer task is waiting, so this answer is stale
        job.resolve(waiting || mine !== current ? null : r);
        pump();
      },
      () => {
        running = false;
        job.resolve(null);
        pump();
      },
    );
  };
  return {
    run(task: AssistTask): Promise<AssistResult | null> {
      waiting?.resolve(null);
      return new Promise<AssistResult | null>((resolve) => {
        waiting = { task, resolve };
        pump();
      });
    },
    cancel(): void {
      waiting?.resolve(null);
      waiting = null;
      current++;
    },
  };
}
