/**
 * `npm run backup [-- <folder>]`: pg_dump of the database plus a copy of the
 * file store into `<folder>/cayline-backup-<UTC time>/` (default folder
 * `backups/`). See server/ops/backup.ts.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ROOT_DIR, loadConfig } from '../config';
import { fileStoreFor } from '../storage/fileStore';
import { backup } from '../ops/backup';
import { databaseForTool } from '../ops/database-url';

const say = (m: string) => console.log(`[backup] ${m}`);

async function main() {
  const outDir = path.resolve(process.argv[2] ?? path.join(ROOT_DIR, 'backups'));
  const config = loadConfig();
  const db = await databaseForTool(config.storageDir, say);
  try {
    const appVersion = (JSON.parse(fs.readFileSync(path.join(ROOT_DIR, 'package.json'), 'utf8')) as { version: string }).version;
    const { dir } = await backup({ databaseUrl: db.url, store: fileStoreFor(config.storageDir), outDir, appVersion, log: say });
    console.log(dir);
  } finally {
    await db.release();
  }
}

main().catch((e) => {
  console.error(`[backup] failed: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
