// Entry of the report PDF worker thread (see pdf-thread.ts). Like the
// measurement workers, a worker thread starts without its parent's loaders:
// register tsx, then run the TypeScript PDF builder on the data posted to it.
import { threadId } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
const { writeReportPdf } = await import('./pdf.ts');

// structured cloning turns Buffers into Uint8Arrays; pdfkit wants Buffers for images
const asBuffers = (figures) => figures.map((f) => ({ ...f, image: Buffer.from(f.image.buffer, f.image.byteOffset, f.image.byteLength) }));

/**
 * The crops come with the task, or (`figures: null`) later over the same
 * port as `{ figures }` or `{ error }` while the document is already being
 * built (pdf-thread.ts always sends one of the two).
 */
function figuresOf(input, port) {
  if (input.figures) return Promise.resolve(asBuffers(input.figures));
  return new Promise((resolve, reject) => {
    port.on('message', (m) => (m.error !== undefined ? reject(new Error(m.error)) : resolve(asBuffers(m.figures))));
  });
}

export default async function pdfTask({ input, file, progress }) {
  try {
    const figures = figuresOf(input, progress);
    figures.catch(() => {}); // awaited by writeReportPdf; a failure before that point must not go unhandled
    const done = await writeReportPdf({ ...input, figures, onProgress: (f) => progress.postMessage(f) }, file);
    return { ...done, threadId };
  } catch (err) {
    return { error: err instanceof Error ? err.message : String(err) };
  } finally {
    progress.close();
  }
}
