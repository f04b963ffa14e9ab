/**
 * The file store: every runtime file (section originals, tile pyramids) goes
 * through this small interface, keyed by `/`-separated keys such as
 * `sections/<storageKey>/pyramid/tiles/3/0_1.jpg`. Keys are built by the
 * server from database values and integers only; `assertKey` refuses
 * anything else, so no client string reaches a path.
 *
 * The local-disk driver keeps files under `<storageDir>/`; a driver that
 * speaks the S3 API could implement the same interface later (import a local
 * folder = upload every file then write a marker; remove a prefix = list and
 * delete).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import crypto from 'node:crypto';
import type { Readable } from 'node:stream';

export interface StoredObject {
  stream: Readable;
  size: number;
}

export interface FileStore {
  /** Write bytes under a key (replacing any). */
  put(key: string, data: Buffer): Promise<void>;
  /** Move a local file into the store under a key. */
  importFile(localPath: string, key: string): Promise<void>;
  /**
   * Move a whole local folder into the store under a prefix, atomically: the
   * prefix either does not exist or holds the complete folder. Fails if the
   * prefix already exists.
   */
  importDir(localDir: string, prefix: string): Promise<void>;
  /** A readable stream of a stored object, or null when missing. */
  get(key: string): Promise<StoredObject | null>;
  exists(key: string): Promise<boolean>;
  /** Remove a key and everything below it (no error when missing). */
  removePrefix(prefix: string): Promise<void>;
  /** Top-level entries below a prefix (names only) with their last change time. */
  list(prefix: string): Promise<{ name: string; modifiedAt: Date }[]>;
  /**
   * A local path to read a stored object from (sharp needs a file). The local
   * driver returns the object itself; a remote driver would download a copy.
   */
  localCopy(key: string): Promise<{ path: string; release(): Promise<void> }>;
  /**
   * A fresh private scratch folder on local disk (inside the store's tmp area),
   * named `<prefix>-<owner>-<random>` while a scratch owner is set (see
   * `setScratchOwner`), else `<prefix>-<random>`.
   */
  scratchDir(prefix: string): Promise<string>;
  /** Remove every scratch folder made with `prefix` (any owner). */
  removeScratch(prefix: string): Promise<void>;
  /**
   * Tag this process's scratch folders with its job_workers id, so that a boot
   * sweep can tell a dead process's leftovers from a live one's work.
   */
  setScratchOwner(owner: string | null): void;
  /** The local scratch area (for sweeping leftovers). */
  readonly scratchRoot: string;
}

const SEGMENT = /^[A-Za-z0-9][A-Za-z0-9._-]{0,127}$/;

/** A key is 1–12 segments of letters, digits, `.`, `_`, `-`, never starting with a dot. */
export function assertKey(key: string): string[] {
  const parts = key.split('/');
  if (parts.length < 1 || parts.length > 12 || !parts.every((p) => SEGMENT.test(p) && !p.includes('..'))) {
    throw new Error(`file store: refused key ${JSON.stringify(key)}`);
  }
  return parts;
}

export function randomName(bytes = 16): string {
  return crypto.randomBytes(bytes).toString('hex');
}

/** A scratch owner tag: `w` and 16 hex digits (a job_workers id). */
export const SCRATCH_OWNER = /^w[0-9a-f]{16}$/;

/** The owner tag in a scratch folder's name (`<prefix>-<owner>-<random>`), or null for an untagged one. */
export function scratchOwnerOf(name: string): string | null {
  const parts = name.split('-');
  const owner = parts.length >= 3 ? parts[parts.length - 2] : '';
  return SCRATCH_OWNER.test(owner) ? owner : null;
}

export class LocalFileStore implements FileStore {
  readonly scratchRoot: string;
  private scratchOwner: string | null = null;

  constructor(private readonly root: string) {
    this.scratchRoot = path.join(root, 'tmp');
  }

  private abs(key: string): string {
    return path.join(this.root, ...assertKey(key));
  }

  async put(key: string, data: Buffer) {
    const p = this.abs(key);
    await fsp.mkdir(path.dirname(p), { recursive: true });
    const tmp = `${p}.${randomName(6)}.part`;
    await fsp.writeFile(tmp, data);
    await fsp.rename(tmp, p);
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

  async get(key: string): Promise<StoredObject | null> {
    const p = this.abs(key);
    try {
      const st = await fsp.stat(p);
      if (!st.isFile()) return null;
      return { stream: fs.createReadStream(p), size: st.size };
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
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
      throw e;
    }
    const out: { name: string; modifiedAt: Date }[] = [];
    for (const name of names) {
      try {
        out.push({ name, modifiedAt: (await fsp.stat(path.join(dir, name))).mtime });
      } catch {
        /* removed meanwhile */
      }
    }
    return out;
  }

  async localCopy(key: string) {
    return { path: this.abs(key), release: async () => {} };
  }

  setScratchOwner(owner: string | null) {
    if (owner !== null && !SCRATCH_OWNER.test(owner)) throw new Error(`file store: refused scratch owner ${JSON.stringify(owner)}`);
    this.scratchOwner = owner;
  }

  async scratchDir(prefix: string) {
    if (!SEGMENT.test(prefix)) throw new Error(`file store: refused scratch prefix ${JSON.stringify(prefix)}`);
    await fsp.mkdir(this.scratchRoot, { recursive: true });
    const name = this.scratchOwner ? `${prefix}-${this.scratchOwner}-${randomName(8)}` : `${prefix}-${randomName(8)}`;
    const dir = path.join(this.scratchRoot, name);
    await fsp.mkdir(dir);
    return dir;
  }

  async removeScratch(prefix: string) {
    if (!SEGMENT.test(prefix)) throw new Error(`file store: refused scratch prefix ${JSON.stringify(prefix)}`);
    for (const e of await fsp.readdir(this.scratchRoot).catch(() => [] as string[])) {
      if (e.startsWith(`${prefix}-`)) await removeTree(path.join(this.scratchRoot, e));
    }
  }
}

/**
 * `rm -r` that tolerates a writer still finishing inside the folder (a tile
 * encode of a build that is stopping): ENOTEMPTY/EBUSY are retried.
 */
export async function removeTree(dir: string) {
  await fsp.rm(dir, { recursive: true, force: true, maxRetries: 10, retryDelay: 100 });
}

/** rename, falling back to copy + unlink across file systems. */
export async function moveFile(from: string, to: string) {
  try {
    await fsp.rename(from, to);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'EXDEV') throw e;
    await fsp.copyFile(from, to);
    await fsp.unlink(from);
  }
}

let store: FileStore | null = null;
let storeRoot: string | null = null;

/** The process's file store for a storage folder (one local driver per folder). */
export function fileStoreFor(storageDir: string): FileStore {
  if (!store || storeRoot !== storageDir) {
    store = new LocalFileStore(storageDir);
    storeRoot = storageDir;
  }
  return store;
}
