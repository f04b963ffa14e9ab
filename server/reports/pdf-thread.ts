/**
 * Builds the report PDF (ECharts server-side rendering of the plots,
 * svg-to-pdfkit, pdfkit, font subsetting: a few seconds of JavaScript) in a
 * worker thread, so the process that takes a report job keeps answering
 * requests on its event loop meanwhile. Input is plain data (the report and
 * the crop figures); progress comes back as messages.
 */
import { Worker } from 'node:worker_threads';
import type { PdfInput } from './pdf';

const ENTRY = new URL('./pdf-worker-entry.mjs', import.meta.url);

export function writeReportPdfOffLoop(input: PdfInput, file: string): Promise<{ pages: number }> {
  const { onProgress, ...data } = input;
  return new Promise((resolve, reject) => {
    // a clean worker: it registers tsx itself (pdf-worker-entry.mjs) instead of inheriting the parent's loader flags
    const worker = new Worker(ENTRY, { workerData: { input: data, file }, execArgv: [] });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      fn();
      void worker.terminate();
    };
    worker.on('message', (m: { progress?: number; done?: { pages: number }; error?: string }) => {
      if (m.progress !== undefined) onProgress?.(m.progress);
      else if (m.done) finish(() => resolve(m.done!));
      else if (m.error !== undefined) finish(() => reject(new Error(`report PDF: ${m.error}`)));
    });
    worker.on('error', (err) => finish(() => reject(err)));
    worker.on('exit', (code) => finish(() => reject(new Error(`report PDF worker stopped (exit code ${code})`))));
  });
}
