/**
 * The file store's S3 driver: objects in one bucket of Amazon S3 or any
 * S3-compatible service, through the AWS SDK v3 (`@aws-sdk/client-s3`;
 * `@aws-sdk/lib-storage` for uploads, which switches to a multipart upload
 * above 5 MiB and aborts it on failure, so a failed write leaves no object).
 *
 * Object keys are the store's keys below an optional folder (`prefix`).
 * Reads stream the object's body straight through; nothing is buffered whole.
 * S3 has no folders: "a prefix exists" means an object is below it, and a
 * folder's change time is its newest object's.
 *
 * Checksums are computed only where S3 requires them (`WHEN_REQUIRED`): some
 * S3-compatible services do not understand the SDK's newer default trailing
 * checksums (common practice for S3-compatible stores).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import {
  S3Client,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  DeleteObjectsCommand,
  PutObjectCommand,
  AbortMultipartUploadCommand,
  type ListObjectsV2CommandOutput,
} from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import { ScratchArea, assertKey, filesBelow, removeTree } from './scratch';
import type { ByteRange, FileStore, StoredObject } from './types';

export interface S3Settings {
  bucket: string;
  region: string;
  endpoint?: string;
  forcePathStyle: boolean;
  credentials?: { accessKeyId: string; secretAccessKey: string };
  /** Folder inside the bucket ('' for its root). */
  prefix: string;
  /** Give up on a connection after `connectMs` and on an open request after `idleMs` of silence (defaults 10 s, 120 s); then the SDK retries. */
  timeouts?: { connectMs: number; idleMs: number };
}

/** Files uploaded at once by importDir. */
const UPLOAD_CONCURRENCY = 8;

function isNotFound(e: unknown): boolean {
  const err = e as { name?: string; Code?: string; $metadata?: { httpStatusCode?: number } };
  return err?.name === 'NoSuchKey' || err?.name === 'NotFound' || err?.Code === 'NoSuchKey' || err?.$metadata?.httpStatusCode === 404;
}

export class S3FileStore extends ScratchArea implements FileStore {
  readonly driver = 's3' as const;
  readonly client: S3Client;
  readonly bucket: string;
  private readonly base: string;

  constructor(storageDir: string, settings: S3Settings) {
    super(storageDir);
    this.bucket = settings.bucket;
    this.base = settings.prefix ? `${settings.prefix}/` : '';
    this.client = new S3Client({
      region: settings.region,
      endpoint: settings.endpoint,
      forcePathStyle: settings.forcePathStyle,
      credentials: settings.credentials,
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
      maxAttempts: 3,
      // a store that stops answering fails the request (and is retried) instead of holding a build or a boot sweep for ever
      // (socketTimeout is smithy's inactivity limit; its requestTimeout would cap a whole large transfer)
      requestHandler: { connectionTimeout: settings.timeouts?.connectMs ?? 10_000, socketTimeout: settings.timeouts?.idleMs ?? 120_000 },
    });
  }

  /** The object key of a store key. */
  private k(key: string): string {
    assertKey(key);
    return this.base + key;
  }

  async put(key: string, data: Buffer) {
    await this.client.send(new PutObjectCommand({ Bucket: this.bucket, Key: this.k(key), Body: data, ContentLength: data.length }));
  }

  /**
   * One upload (a single PUT below 5 MiB, else multipart). On failure the
   * multipart upload is aborted here, so the caller sees the original error
   * even where the abort itself fails (then the bucket's lifecycle rule for
   * incomplete multipart uploads removes the parts; an unfinished multipart
   * upload is never visible as an object).
   */
  private async upload(key: string, body: Readable, size?: number) {
    const upload = new Upload({ client: this.client, params: { Bucket: this.bucket, Key: this.k(key), Body: body, ContentLength: size }, leavePartsOnError: true });
    try {
      await upload.done();
    } catch (e) {
      const uploadId = (upload as unknown as { uploadId?: string }).uploadId;
      if (uploadId) {
        await this.client.send(new AbortMultipartUploadCommand({ Bucket: this.bucket, Key: this.k(key), UploadId: uploadId })).catch(() => {});
      }
      throw e;
    }
  }

  async putStream(key: string, stream: Readable) {
    await this.upload(key, stream);
  }

  async importFile(localPath: string, key: string) {
    const size = (await fsp.stat(localPath)).size;
    await this.upload(key, fs.createReadStream(localPath), size);
    await fsp.rm(localPath, { force: true });
  }

  async importDir(localDir: string, prefix: string) {
    assertKey(prefix);
    if (await this.exists(prefix)) throw new Error(`file store: ${prefix} already exists`);
    const files = await filesBelow(localDir);
    for (const f of files) assertKey(`${prefix}/${f}`);
    let next = 0;
    let failure: { error: unknown } | null = null;
    const worker = async () => {
      while (next < files.length && !failure) {
        const f = files[next++];
        try {
          await this.importFile(path.join(localDir, ...f.split('/')), `${prefix}/${f}`);
        } catch (error) {
          failure ??= { error }; // the other uploaders stop after their current file
        }
      }
    };
    await Promise.all(Array.from({ length: Math.min(UPLOAD_CONCURRENCY, files.length) }, worker));
    if (failure) {
      // every uploader has settled: nothing lands after this clean-up
      await this.removePrefix(prefix).catch(() => {});
      throw (failure as { error: unknown }).error;
    }
    await removeTree(localDir); // as a rename would: the folder is gone
  }

  async get(key: string, range?: ByteRange): Promise<StoredObject | null> {
    try {
      const r = await this.client.send(
        new GetObjectCommand({ Bucket: this.bucket, Key: this.k(key), Range: range ? `bytes=${range.start}-${range.end}` : undefined }),
      );
      return { stream: r.Body as Readable, size: Number(r.ContentLength ?? 0) };
    } catch (e) {
      if (isNotFound(e)) return null;
      // a range starting past the end: an empty read, as the local driver gives
      if ((e as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode === 416) return { stream: Readable.from([]), size: 0 };
      throw e;
    }
  }

  async exists(key: string) {
    try {
      await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: this.k(key) }));
      return true;
    } catch (e) {
      if (!isNotFound(e)) throw e;
    }
    // no MaxKeys: 1 (s3rver fails on a truncated page); one page of up to 1,000 keys is enough
    const r = await this.client.send(new ListObjectsV2Command({ Bucket: this.bucket, Prefix: `${this.k(key)}/` }));
    return (r.KeyCount ?? r.Contents?.length ?? 0) > 0;
  }

  /** Every object key (full, with the bucket folder) below a folder, page by page. */
  private async *objects(prefix: string) {
    let token: string | undefined;
    do {
      const r: ListObjectsV2CommandOutput = await this.client.send(
        new ListObjectsV2Command({ Bucket: this.bucket, Prefix: prefix, ContinuationToken: token }),
      );
      for (const o of r.Contents ?? []) if (o.Key) yield { key: o.Key, size: Number(o.Size ?? 0), modifiedAt: o.LastModified ?? new Date(0) };
      token = r.IsTruncated ? r.NextContinuationToken : undefined;
    } while (token);
  }

  async removePrefix(prefix: string) {
    const own = this.k(prefix);
    let batch: string[] = [own];
    const flush = async () => {
      if (!batch.length) return;
      const r = await this.client.send(
        new DeleteObjectsCommand({ Bucket: this.bucket, Delete: { Objects: batch.map((Key) => ({ Key })), Quiet: true } }),
      );
      const failed = (r.Errors ?? []).filter((e) => e.Code !== 'NoSuchKey');
      if (failed.length) throw new Error(`file store: could not remove ${failed[0].Key}: ${failed[0].Message ?? failed[0].Code}`);
      batch = [];
    };
    for await (const o of this.objects(`${own}/`)) {
      batch.push(o.key);
      if (batch.length === 1000) await flush(); // DeleteObjects takes at most 1,000 keys
    }
    await flush();
  }

  async list(prefix: string) {
    const folder = `${this.k(prefix)}/`;
    const newest = new Map<string, Date>();
    for await (const o of this.objects(folder)) {
      const name = o.key.slice(folder.length).split('/')[0];
      const seen = newest.get(name);
      if (!seen || o.modifiedAt > seen) newest.set(name, o.modifiedAt);
    }
    return [...newest].map(([name, modifiedAt]) => ({ name, modifiedAt }));
  }

  async *listKeys(prefix: string) {
    const own = this.k(prefix);
    const strip = (k: string) => k.slice(this.base.length);
    try {
      const h = await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: own }));
      yield { key: prefix, size: Number(h.ContentLength ?? 0), modifiedAt: h.LastModified ?? new Date(0) };
    } catch (e) {
      if (!isNotFound(e)) throw e;
    }
    for await (const o of this.objects(`${own}/`)) yield { key: strip(o.key), size: o.size, modifiedAt: o.modifiedAt };
  }

  async localCopy(key: string) {
    const obj = await this.get(key);
    if (!obj) throw new Error(`file store: ${key} is missing`);
    const dir = await this.scratchDir('copy');
    const file = path.join(dir, key.split('/').pop()!);
    try {
      await pipeline(obj.stream, fs.createWriteStream(file, { flags: 'wx' }));
    } catch (e) {
      await removeTree(dir);
      throw e;
    }
    return { path: file, release: () => removeTree(dir) };
  }
}
