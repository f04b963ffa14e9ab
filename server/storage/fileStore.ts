/**
 * The file store: every runtime file (section originals, tile pyramids,
 * reports, report batches, analogue crops, kept mail) goes through this small
 * interface, keyed by `/`-separated keys such as
 * `sections/<storageKey>/pyramid/tiles/3/0_1.jpg`. Keys are built by the
 * server from database values and integers only; `assertKey` refuses
 * anything else, so no client string reaches a path.
 *
 * Two drivers, chosen by settings (`storeSettingsFromEnv`):
 * - `local` (default): files under `<storageDir>/`;
 * - `s3`: an S3-compatible bucket through the AWS SDK (server/storage/s3Store.ts),
 *   so several machines share one store.
 * Scratch (uploads in progress, builds, copies for sharp) is always on this
 * machine's disk under `<storageDir>/tmp` (server/storage/scratch.ts).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import type { Readable } from 'node:stream';
import { ScratchArea, assertKey, filesBelow, moveFile, randomName, SEGMENT } from './scratch';
import { S3FileStore, type S3Settings } from './s3Store';
import type { ByteRange, FileStore, StoredObject } from './types';

export { assertKey, randomName, SCRATCH_OWNER, scratchOwnerOf, removeTree, moveFile } from './scratch';

export type { StoredObject, ByteRange, FileStore } from './types';

export class LocalFileStore extends ScratchArea implements FileStore {
  readonly driver = 'local' as const;

  constructor(private readonly root: string) {
    super(root);
  }

  private abs(key: string): string {
    return path.join(this.root, ...assertKey(key));
  }

  async put(key: string, data: Buffer, opts: { private?: boolean } = {}) {
    const p = this.abs(key);
    await fsp.mkdir(path.dirname(p), { recursive: true, mode: opts.private ? 0o700 : undefined });
    const tmp = `${p}.${randomName(6)}.part`;
    try {
      // 'wx': never reuse or follow an existing file; a private file's mode is set at creation
      await fsp.writeFile(tmp, data, { mode: opts.private ? 0o600 : undefined, flag: 'wx' });
      await fsp.rename(tmp, p);
    } catch (e) {
      await fsp.rm(tmp, { force: true });
      throw e;
    }
  }

  async putStream(key: string, stream: Readable) {
    const p = this.abs(key);
    await fsp.mkdir(path.dirname(p), { recursive: true });
    const tmp = `${p}.${randomName(6)}.part`;
    try {
      await pipeline(stream, fs.createWriteStream(tmp, { flags: 'wx' }));
      await fsp.rename(tmp, p);
    } catch (e) {
      await fsp.rm(tmp, { force: true });
      throw e;
    }
  }

  async importFile(localPath: string, key: string) {
    const p = this.abs(key);
    await fsp.mkdir(path.dirname(p), { recursive: true });
    await moveFile(localPath, p);
  }

  async importDir(localDir: string, prefix: string) {
    const p = this.abs(prefix);
    await fsp.mkdir(path.dirname(p), { recursive: true });
    // rename(2) of a directory onto a missing path is atomic on one file system;
    // onto an existing non-empty directory it fails (ENOTEMPTY/EEXIST), which we want.
    if (fs.existsSync(p)) throw new Error(`file store: ${prefix} already exists`);
    await fsp.rename(localDir, p);
  }

  async get(key: string, range?: ByteRange): Promise<StoredObject | null> {
    const p = this.abs(key);
    try {
      const st = await fsp.stat(p);
      if (!st.isFile()) return null;
      if (!range) return { stream: fs.createReadStream(p), size: st.size };
      const end = Math.min(range.end, st.size - 1);
      if (range.start > end) return { stream: fs.createReadStream(p, { start: 0, end: -1 }), size: 0 };
      return { stream: fs.createReadStream(p, { start: range.start, end }), size: end - range.start + 1 };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
      throw e;
    }
  }

  async exists(key: string) {
    return fs.existsSync(this.abs(key));
  }

  async removePrefix(prefix: string) {
    await fsp.rm(this.abs(prefix), { recursive: true, force: true });
  }

  async list(prefix: string) {
    const dir = this.abs(prefix);
    let names: string[];
    try {
      names = await fsp.readdir(dir);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT' || (e as NodeJS.ErrnoException).code === 'ENOTDIR') return [];
      throw e;
    }
    const out: { name: string; modifiedAt: Date }[] = [];
    for (const name of names) {
      if (!SEGMENT.test(name) || name.endsWith('.part')) continue; // writes in progress
      try {
        out.push({ name, modifiedAt: (await fsp.stat(path.join(dir, name))).mtime });
      } catch {
        /* removed meanwhile */
      }
    }
    return out;
  }

  async *listKeys(prefix: string) {
    const dir = this.abs(prefix);
    const st = await fsp.stat(dir).catch(() => null);
    if (!st) return;
    const rels = st.isFile() ? [''] : await filesBelow(dir);
    for (const rel of rels.sort()) {
      if (rel.split('/').some((s) => !SEGMENT.test(s)) && rel !== '') continue;
      if (rel.endsWith('.part')) continue; // writes in progress
      const key = rel ? `${prefix}/${rel}` : prefix;
      const s = await fsp.stat(this.abs(key)).catch(() => null);
      if (s?.isFile()) yield { key, size: s.size, modifiedAt: s.mtime };
    }
  }

  async localCopy(key: string) {
    return { path: this.abs(key), release: async () => {} };
  }
}

export type StoreSettings = { driver: 'local' } | ({ driver: 's3' } & S3Settings);

/**
 * The store's driver from the environment:
 * CAYLINE_STORE (`local` | `s3`, default local); for s3 CAYLINE_S3_BUCKET
 * (required), CAYLINE_S3_REGION (default us-east-1), CAYLINE_S3_ENDPOINT (for
 * S3-compatible services), CAYLINE_S3_FORCE_PATH_STYLE (`true`/`false`;
 * default true when an endpoint is set), CAYLINE_S3_ACCESS_KEY_ID and
 * CAYLINE_S3_SECRET_ACCESS_KEY (else the SDK's default credential chain),
 * CAYLINE_S3_PREFIX (keys below this folder of the bucket).
 */
export function storeSettingsFromEnv(env: NodeJS.ProcessEnv = process.env): StoreSettings {
  const driver = (env.CAYLINE_STORE ?? '').trim() || 'local';
  if (driver === 'local') return { driver: 'local' };
  if (driver !== 's3') throw new Error(`CAYLINE_STORE: "local" or "s3", got "${driver}"`);
  const bucket = (env.CAYLINE_S3_BUCKET ?? '').trim();
  if (!bucket) throw new Error('CAYLINE_S3_BUCKET: the bucket name is required when CAYLINE_STORE=s3');
  const endpoint = (env.CAYLINE_S3_ENDPOINT ?? '').trim() || undefined;
  if (endpoint && !/^https?:\/\/[^\s/]+/.test(endpoint)) throw new Error(`CAYLINE_S3_ENDPOINT: an http(s) URL, got "${endpoint}"`);
  const fps = (env.CAYLINE_S3_FORCE_PATH_STYLE ?? '').trim();
  if (fps && fps !== 'true' && fps !== 'false') throw new Error(`CAYLINE_S3_FORCE_PATH_STYLE: "true" or "false", got "${fps}"`);
  const accessKeyId = (env.CAYLINE_S3_ACCESS_KEY_ID ?? '').trim();
  const secretAccessKey = (env.CAYLINE_S3_SECRET_ACCESS_KEY ?? '').trim();
  if (!accessKeyId !== !secretAccessKey) throw new Error('CAYLINE_S3_ACCESS_KEY_ID and CAYLINE_S3_SECRET_ACCESS_KEY: set both or neither');
  const prefix = (env.CAYLINE_S3_PREFIX ?? '').trim().replace(/^\/+|\/+$/g, '');
  if (prefix) assertKey(prefix);
  return {
    driver: 's3',
    bucket,
    region: (env.CAYLINE_S3_REGION ?? '').trim() || 'us-east-1',
    endpoint,
    forcePathStyle: fps ? fps === 'true' : Boolean(endpoint),
    credentials: accessKeyId ? { accessKeyId, secretAccessKey } : undefined,
    prefix,
  };
}

/** A store for a storage folder (scratch, local files) with the given driver settings. */
export function createFileStore(storageDir: string, settings: StoreSettings): FileStore {
  return settings.driver === 's3' ? new S3FileStore(storageDir, settings) : new LocalFileStore(storageDir);
}

let store: FileStore | null = null;
let storeId: string | null = null;

/** The process's file store for a storage folder, with the driver the environment names (one store per folder and settings). */
export function fileStoreFor(storageDir: string): FileStore {
  const settings = storeSettingsFromEnv();
  const id = JSON.stringify([storageDir, settings]);
  if (!store || storeId !== id) {
    store = createFileStore(storageDir, settings);
    storeId = id;
  }
  return store;
}
