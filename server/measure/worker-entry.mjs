// Entry of a measurement worker thread. The server runs its TypeScript
// through tsx (npm start, npm run dev) or vitest, never as plain node, and a
// worker thread starts without its parent's loaders: register tsx here, then
// load the TypeScript worker.
import { register } from 'tsx/esm/api';

register();
const { default: measureWorker } = await import('./worker.ts');

export default measureWorker;
