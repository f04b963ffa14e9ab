// Entry of a measurement worker thread. The server runs its TypeScript
// through tsx (npm start, npm run dev) or vitest, never as plain node, and a
// worker thread starts without its parent's loaders: register tsx here, then
// load the TypeScript worker. Besides the engine (default export) the pool
// runs the CSV import check (`importCheck`, server/services/analogue-import-check.ts).
import { register } from 'tsx/esm/api';

register();
const { default: measureWorker } = await import('./worker.ts');
const { runImportCheck } = await import('../services/analogue-import-check.ts');

export default measureWorker;
export const importCheck = runImportCheck;
