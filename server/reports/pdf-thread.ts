/**
 * Builds the report PDF (ECharts server-side rendering of the plots,
 * svg-to-pdfkit, pdfkit, font subsetting) in a worker thread, so the process
 * that takes a report job keeps answering requests on its event loop
 * meanwhile. Input is plain data (the report and the crop figures);
 * progress comes back over a MessagePort handed to the task, and crops still
 * being composited when the task starts go to the thread over the same port.
 *
 * The thread is kept warm between reports (one thread, tinypool): starting
 * it means registering tsx and loading pdfkit, fontkit and ECharts, about
 * 1.5–2 s, several times the PDF itself. It is closed after
 * `PDF_IDLE_MS` without work and by `closeReportPdfThread()` (server close).
 */
import { MessageChannel } from 'node:worker_threads';
import { Tinypool } from 'tinypool';
import type { PdfInput } from './pdf';

const PDF_IDLE_MS = 60_000;
let pool: Tinypool | null = null;

function thePool(): Tinypool {
  if (pool) return pool;
  pool = new Tinypool({
    filename: new URL('./pdf-worker-entry.mjs', import.meta.url).href,
    name: 'default',
    minThreads: 0,
    maxThreads: 1,
    idleTimeout: PDF_IDLE_MS,
    // a clean worker: it registers tsx itself (pdf-worker-entry.mjs) instead of inheriting the parent's loader flags
    execArgv: [],
  });
  return pool;
}

/**
 * The PDF of `input` written to `file` on the PDF thread; resolves with its
 * page count and the thread that made it. When `input.figures` is a promise
 * the thread starts at once and the crops follow over the task's port when
 * they are ready (or the reason they failed, which fails the PDF).
 */
export async function writeReportPdfOffLoop(input: PdfInput, file: string): Promise<{ pages: number; threadId: number }> {
  const { onProgress, figures, ...data } = input;
  const { port1, port2 } = new MessageChannel();
  port1.on('message', (f: number) => onProgress?.(f));
  const later = !Array.isArray(figures);
  if (later) {
    Promise.resolve(figures).then(
      (f) => port1.postMessage({ figures: f }),
      (e: unknown) => port1.postMessage({ error: e instanceof Error ? e.message : String(e) }),
    );
  }
  try {
    const task = { input: { ...data, figures: later ? null : figures }, file, progress: port2 };
    const reply = (await thePool().run(task, { transferList: [port2] })) as { pages?: number; threadId?: number; error?: string };
    if (reply.error !== undefined) throw new Error(`report PDF: ${reply.error}`);
    return { pages: reply.pages!, threadId: reply.threadId! };
  } finally {
    port1.close();
  }
}

/** Stop the PDF thread (server close, so test processes exit). A later report starts a new one. */
export async function closeReportPdfThread(): Promise<void> {
  const p = pool;
  pool = null;
  if (p) await p.destroy();
}
