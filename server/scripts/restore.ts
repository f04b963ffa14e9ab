/**
 * `npm run restore -- <backup folder>`: checks the backup completely, then
 * replaces the database (every schema dropped, pg_restore) and the file
 * store's content with it. Stop Cayline (server and workers) first.
 * See server/ops/backup.ts.
 */
import path from 'node:path';
import { loadConfig } from '../config';
import { fileStoreFor } from '../storage/fileStore';
import { restore } from '../ops/backup';
import { databaseForTool } from '../ops/database-url';

const say = (m: string) => console.log(`[restore] ${m}`);

async function main() {
  const from = process.argv[2];
  if (!from) {
    console.error('usage: npm run restore -- <backup folder>   (a folder written by npm run backup)');
    process.exit(2);
  }
  const config = loadConfig();
  const db = await databaseForTool(config.storageDir, say);
  try {
    const m = await restore({ databaseUrl: db.url, store: fileStoreFor(config.storageDir), from: path.resolve(from), log: say });
    say(`restored the backup of ${m.createdAt} (${m.files.length} files)`);
  } finally {
    await db.release();
  }
}

main().catch((e) => {
  console.error(`[restore] failed: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
