/** `npm run bench`: every benchmark in turn. Each prints its own ratios; none fails on a time. */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { ROOT_DIR } from '../../server/config';

const benches = ['measure.bench.ts', 'model.bench.ts', 'tiles.bench.ts', 'canvas.bench.ts', 'stall.bench.ts', 'library.bench.ts', 'report.bench.ts', 'segy.bench.ts', 'trace-assist.bench.ts'];
const only = process.argv.slice(2);
for (const b of benches) {
  if (only.length && !only.some((o) => b.startsWith(o))) continue;
  console.log(`\n=== ${b} ===`);
  const r = spawnSync(process.execPath, [path.join(ROOT_DIR, 'node_modules', 'tsx', 'dist', 'cli.mjs'), path.join(ROOT_DIR, 'tests', 'bench', b)], {
    cwd: ROOT_DIR,
    stdio: 'inherit',
  });
  if (r.status !== 0) console.log(`(${b} exited with ${r.status})`);
}
