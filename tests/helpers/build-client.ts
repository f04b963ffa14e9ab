/** E2E global setup: build the client once so the test servers can serve it. */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { ROOT_DIR } from '../../server/config';

export default function setup() {
  if (process.env.CAYLINE_E2E_SKIP_BUILD === '1') return;
  const r = spawnSync(path.join(ROOT_DIR, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn', ...(process.env.CAYLINE_CLIENT_DIR ? ['--outDir', path.resolve(process.env.CAYLINE_CLIENT_DIR), '--emptyOutDir'] : [])], { cwd: ROOT_DIR, stdio: 'inherit' });
  if (r.status !== 0) throw new Error('vite build failed');
}
