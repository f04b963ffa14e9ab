/** The file store's interface and its small value types (drivers: fileStore.ts local, s3Store.ts). */
import type { Readable } from 'node:stream';

export interface StoredObject {
  stream: Readable;
  /** Bytes in `stream` (the range's length for a ranged read). */
  size: number;
}

/** A byte range, both ends inclusive (as HTTP Range and fs.createReadStream take it). */
export interface ByteRange {
  start: number;
  end: number;
}

export interface FileStore {
  readonly driver: 'local' | 's3';
  /**
   * Write bytes under a key (replacing any), atomically: readers see the old
   * object or the new one, never part of it. `private` (kept mail): the local
   * driver writes the file 0600 in 0700 folders; a bucket is private anyway.
   */
  put(key: string, data: Buffer, opts?: { private?: boolean }): Promise<void>;
  /** Write a stream under a key (multipart to S3), atomically; a failed write leaves nothing. */
  putStream(key: string, stream: Readable): Promise<void>;
  /** Move a local file into the store under a key (the local file is gone afterwards). */
  importFile(localPath: string, key: string): Promise<void>;
  /**
   * Move a whole local folder into the store under a prefix. Fails if the
   * prefix already exists. Local driver: one rename, so the prefix either does
   * not exist or holds the complete folder. S3 driver: every file is uploaded,
   * and a failed upload removes what it wrote; readers must not rely on the
   * prefix before the database row that names it says so (every caller
   * publishes in the transaction that marks the row ready).
   */
  importDir(localDir: string, prefix: string): Promise<void>;
  /** A readable stream of a stored object (or of a byte range of it), or null when missing. */
  get(key: string, range?: ByteRange): Promise<StoredObject | null>;
  /** An object or a prefix with something below it exists. */
  exists(key: string): Promise<boolean>;
  /** Remove a key and everything below it (no error when missing). */
  removePrefix(prefix: string): Promise<void>;
  /**
   * Top-level entries below a prefix (names only) with their last change time
   * (local: the entry's mtime; S3: the newest object below the entry).
   */
  list(prefix: string): Promise<{ name: string; modifiedAt: Date }[]>;
  /** Every object below a prefix, recursively (backups). */
  listKeys(prefix: string): AsyncIterable<{ key: string; size: number; modifiedAt: Date }>;
  /**
   * A local path to read a stored object from (sharp needs a file). The local
   * driver returns the object itself; the S3 driver downloads a copy into scratch.
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
  /** The entries of the local scratch area with their mtime (for sweeping leftovers). */
  listScratch(): Promise<{ name: string; modifiedAt: Date }[]>;
  /**
   * Tag this process's scratch folders with its job_workers id, so that a boot
   * sweep can tell a dead process's leftovers from a live one's work.
   */
  setScratchOwner(owner: string | null): void;
  /** The local scratch area (for sweeping leftovers). */
  readonly scratchRoot: string;
}
