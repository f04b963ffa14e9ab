// Entry of the report PDF worker thread (see pdf-thread.ts). Like the
// measurement workers, a worker thread starts without its parent's loaders:
// register tsx, then run the TypeScript PDF builder on the data posted to it.
import { threadId } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
const { writeReportPdf } = await import('./pdf.ts');

export default async function pdfTask({ input, file, progress }) {
  try {
    // structured cloning turns Buffers into Uint8Arrays; pdfkit wants Buffers for images
    const figures = input.figures.map((f) => ({ ...f, image: Buffer.from(f.image.buffer, f.image.byteOffset, f.image.byteLength) }));
    const done = await writeReportPdf({ ...input, figures, onProgress: (f) => progress.postMessage(f) }, file);
    return { ...done, threadId };
  } catch (err) {
    return { error: err instanceof Error ? err.message : String(err) };
  } finally {
    progress.close();
  }
}
