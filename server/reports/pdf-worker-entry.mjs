// Entry of the report PDF worker thread (see pdf-thread.ts). Like the
// measurement workers, a worker thread starts without its parent's loaders:
// register tsx, then run the TypeScript PDF builder on the data posted to it.
import { parentPort, workerData } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
const { writeReportPdf } = await import('./pdf.ts');
try {
  const { input, file } = workerData;
  // structured cloning turns Buffers into Uint8Arrays; pdfkit wants Buffers for images
  const figures = input.figures.map((f) => ({ ...f, image: Buffer.from(f.image.buffer, f.image.byteOffset, f.image.byteLength) }));
  const result = await writeReportPdf({ ...input, figures, onProgress: (f) => parentPort.postMessage({ progress: f }) }, file);
  parentPort.postMessage({ done: result });
} catch (err) {
  parentPort.postMessage({ error: err instanceof Error ? err.message : String(err) });
}
