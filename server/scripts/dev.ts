/**
 * `npm run dev`: the API server (own PostgreSQL as in `npm start`, no client
 * build) plus Vite's dev server with hot reload, proxying /api to it.
 */
import path from 'node:path';
import { spawn } from 'node:child_process';
import { ROOT_DIR } from '../config';

const env = { ...process.env, CAYLINE_SKIP_BUILD: '1' };
const api = spawn(process.execPath, [path.join(ROOT_DIR, 'node_modules', 'tsx', 'dist', 'cli.mjs'), 'watch', '--clear-screen=false', 'server/scripts/start.ts'], {
  cwd: ROOT_DIR,
  env,
  stdio: 'inherit',
});
const vite = spawn(path.join(ROOT_DIR, 'node_modules', '.bin', 'vite'), [], { cwd: ROOT_DIR, env, stdio: 'inherit' });
const stop = () => {
  vite.kill('SIGTERM');
  api.kill('SIGINT');
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
api.on('exit', () => vite.kill('SIGTERM'));
