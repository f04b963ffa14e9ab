/**
 * The file store's contract, run against both drivers: the local folder and
 * the S3 driver against a local fake (s3rver, tests/helpers/s3-fake.ts).
 */
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createFileStore, storeSettingsFromEnv, type FileStore } from '../../../server/storage/fileStore';
import { S3FileStore } from '../../../server/storage/s3Store';
import { startS3Fake, type S3Fake } from '../../helpers/s3-fake';

async function text(store: FileStore, key: string): Promise<string | null> {
  const obj = await store.get(key);
  if (!obj) return null;
  const chunks: Buffer[] = [];
  for await (const c of obj.stream) chunks.push(c as Buffer);
  const all = Buffer.concat(chunks);
  expect(all.length).toBe(obj.size);
  return all.toString('latin1');
}

const sha = (b: Buffer) => crypto.createHash('sha256').update(b).digest('hex');

async function bytesOf(store: FileStore, key: string): Promise<Buffer> {
  const obj = await store.get(key);
  const chunks: Buffer[] = [];
  for await (const c of obj!.stream) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}

let fake: S3Fake;
const dirs: string[] = [];
beforeAll(async () => {
  process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED = 'true';
  fake = await startS3Fake();
});
afterAll(async () => {
  await fake?.close();
  for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
});

function storageDir() {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-store-'));
  dirs.push(d);
  return d;
}

describe.each(['local', 's3'] as const)('file store, %s driver', (driver) => {
  let store: FileStore;
  beforeAll(() => {
    // each driver run gets its own folder in the bucket, so the runs cannot see each other's objects
    store = createFileStore(storageDir(), driver === 'local' ? { driver: 'local' } : { ...fake.settings, prefix: `run-${crypto.randomBytes(4).toString('hex')}` });
    expect(store.driver).toBe(driver);
  });

  it('puts, replaces, reads and tells what exists', async () => {
    expect(await store.get('a/b/one.txt')).toBeNull();
    expect(await store.exists('a')).toBe(false);
    await store.put('a/b/one.txt', Buffer.from('first'));
    await store.put('a/b/one.txt', Buffer.from('second'));
    expect(await text(store, 'a/b/one.txt')).toBe('second');
    expect(await store.exists('a/b/one.txt')).toBe(true);
    expect(await store.exists('a/b')).toBe(true); // a prefix with an object below it
    expect(await store.exists('a/c')).toBe(false);
  });

  it('refuses keys that could leave the store', async () => {
    for (const bad of ['../x', 'a/../b', '.hidden', 'a//b', '', 'a/b c']) {
      await expect(store.put(bad, Buffer.from('x'))).rejects.toThrow(/refused key/);
      await expect(store.get(bad)).rejects.toThrow(/refused key/);
    }
  });

  it('reads a byte range, streamed', async () => {
    await store.put('r/digits', Buffer.from('0123456789'));
    const obj = await store.get('r/digits', { start: 2, end: 5 });
    expect(obj!.stream).toBeInstanceOf(Readable);
    expect(obj!.size).toBe(4);
    expect((await bytesOf(store, 'r/digits')).toString()).toBe('0123456789');
    const chunks: Buffer[] = [];
    for await (const c of obj!.stream) chunks.push(c as Buffer);
    expect(Buffer.concat(chunks).toString()).toBe('2345');
  });

  it('writes a stream above the multipart size (12 MiB) whole, and a failing stream leaves nothing', async () => {
    const big = crypto.randomBytes(12 * 1024 * 1024);
    async function* chunks() {
      for (let i = 0; i < big.length; i += 1024 * 1024) yield big.subarray(i, i + 1024 * 1024);
    }
    await store.putStream('big/blob.bin', Readable.from(chunks()));
    expect(sha(await bytesOf(store, 'big/blob.bin'))).toBe(sha(big));

    async function* failing() {
      for (let i = 0; i < 7; i++) yield big.subarray(i * 1024 * 1024, (i + 1) * 1024 * 1024); // past the first 5 MiB part
      throw new Error('the sender went away');
    }
    await expect(store.putStream('big/broken.bin', Readable.from(failing()))).rejects.toThrow(/went away/);
    expect(await store.get('big/broken.bin')).toBeNull();
    const keys: string[] = [];
    for await (const k of store.listKeys('big')) keys.push(k.key);
    expect(keys).toEqual(['big/blob.bin']); // no part file, no half object
  });

  it('imports a local file (moved: gone from scratch afterwards)', async () => {
    const dir = await store.scratchDir('upload');
    const file = path.join(dir, 'f');
    const data = crypto.randomBytes(6 * 1024 * 1024 + 17);
    fs.writeFileSync(file, data);
    await store.importFile(file, 'sections/k1/original');
    expect(fs.existsSync(file)).toBe(false);
    expect(sha(await bytesOf(store, 'sections/k1/original'))).toBe(sha(data));
  });

  it('imports a folder under a missing prefix, refuses an existing one, and lists entries and keys', async () => {
    const dir = await store.scratchDir('build');
    fs.mkdirSync(path.join(dir, 'pyr', 'tiles', '0'), { recursive: true });
    fs.writeFileSync(path.join(dir, 'pyr', 'pyramid.json'), '{}');
    fs.writeFileSync(path.join(dir, 'pyr', 'tiles', '0', '0_0.jpg'), 'tile00');
    fs.writeFileSync(path.join(dir, 'pyr', 'tiles', '0', '1_0.jpg'), 'tile10');
    await store.importDir(path.join(dir, 'pyr'), 'sections/k2/pyramid');
    expect(fs.existsSync(path.join(dir, 'pyr'))).toBe(false);
    expect(await text(store, 'sections/k2/pyramid/tiles/0/1_0.jpg')).toBe('tile10');

    fs.mkdirSync(path.join(dir, 'again'));
    fs.writeFileSync(path.join(dir, 'again', 'x'), 'x');
    await expect(store.importDir(path.join(dir, 'again'), 'sections/k2/pyramid')).rejects.toThrow(/already exists/);
    expect(await store.get('sections/k2/pyramid/x')).toBeNull();

    const top = await store.list('sections');
    expect(top.map((e) => e.name).sort()).toEqual(['k1', 'k2']);
    for (const e of top) expect(Date.now() - e.modifiedAt.getTime()).toBeLessThan(10 * 60_000); // just written (a generous bound, not a timing)
    expect((await store.list('sections/k2/pyramid')).map((e) => e.name).sort()).toEqual(['pyramid.json', 'tiles']);
    expect(await store.list('nothing/here')).toEqual([]);

    const keys: { key: string; size: number }[] = [];
    for await (const k of store.listKeys('sections/k2')) keys.push({ key: k.key, size: k.size });
    expect(keys).toEqual([
      { key: 'sections/k2/pyramid/pyramid.json', size: 2 },
      { key: 'sections/k2/pyramid/tiles/0/0_0.jpg', size: 6 },
      { key: 'sections/k2/pyramid/tiles/0/1_0.jpg', size: 6 },
    ]);
  });

  it('removes a prefix and everything below it, not its neighbours that share its first letters', async () => {
    await store.put('rm/ab/one', Buffer.from('1'));
    await store.put('rm/ab/deep/two', Buffer.from('2'));
    await store.put('rm/abc/three', Buffer.from('3'));
    await store.put('rm/ab.txt', Buffer.from('4'));
    await store.removePrefix('rm/ab');
    await store.removePrefix('rm/never-there');
    expect(await store.exists('rm/ab')).toBe(false);
    expect(await text(store, 'rm/abc/three')).toBe('3');
    expect(await text(store, 'rm/ab.txt')).toBe('4');
  });

  it('gives a local copy for sharp, and releasing it leaves no scratch', async () => {
    await store.put('copy/src.png', Buffer.from('pixels'));
    const before = (await store.listScratch()).length;
    const copy = await store.localCopy('copy/src.png');
    expect(fs.readFileSync(copy.path, 'utf8')).toBe('pixels');
    await copy.release();
    if (driver === 's3') {
      expect(fs.existsSync(copy.path)).toBe(false);
      expect((await store.listScratch()).length).toBe(before);
      await expect(store.localCopy('copy/missing.png')).rejects.toThrow(/missing/);
    } else {
      expect(fs.existsSync(copy.path)).toBe(true); // the object itself
    }
  });

  it('keeps scratch on local disk, tagged with its owner', async () => {
    store.setScratchOwner('w0123456789abcdef');
    const dir = await store.scratchDir('build-k9');
    store.setScratchOwner(null);
    expect(dir.startsWith(store.scratchRoot)).toBe(true);
    expect(path.basename(dir)).toMatch(/^build-k9-w0123456789abcdef-[0-9a-f]{16}$/);
    expect((await store.listScratch()).map((e) => e.name)).toContain(path.basename(dir));
    await store.removeScratch('build-k9');
    expect(fs.existsSync(dir)).toBe(false);
    expect(() => store.setScratchOwner('../evil')).toThrow(/scratch owner/);
  });
});

describe('the S3 driver on failure', () => {
  it('a folder import that fails half-way removes what it had uploaded', async () => {
    const store = createFileStore(storageDir(), { ...fake.settings, prefix: 'fail-run' }) as S3FileStore;
    const dir = await store.scratchDir('build');
    for (let i = 0; i < 20; i++) fs.writeFileSync(path.join(dir, `t${i}.jpg`), `tile ${i}`);
    const real = store.importFile.bind(store);
    let n = 0;
    const spy = vi.spyOn(store, 'importFile').mockImplementation(async (file, key) => {
      if (++n === 12) throw new Error('connection reset');
      return real(file, key);
    });
    await expect(store.importDir(dir, 'sections/k3/pyramid')).rejects.toThrow(/connection reset/);
    spy.mockRestore();
    expect(await store.exists('sections/k3/pyramid')).toBe(false);
    expect(await store.list('sections')).toEqual([]);
  });

  it('a store that accepts connections and never answers fails the request instead of hanging', async () => {
    const sockets: net.Socket[] = [];
    const silent = net.createServer((s) => sockets.push(s)); // reads nothing back, writes nothing
    await new Promise<void>((r) => silent.listen(0, '127.0.0.1', r));
    const { port } = silent.address() as net.AddressInfo;
    try {
      const store = createFileStore(storageDir(), { ...fake.settings, endpoint: `http://127.0.0.1:${port}`, timeouts: { connectMs: 500, idleMs: 300 } });
      const t0 = Date.now();
      await expect(store.exists('sections/k4/original')).rejects.toThrow();
      // three attempts of 0.3 s silence each plus the SDK's back-off, far below the default of 120 s per attempt
      expect(Date.now() - t0).toBeLessThan(30_000);
      expect(sockets.length).toBeGreaterThanOrEqual(1);
    } finally {
      for (const s of sockets) s.destroy();
      await new Promise((r) => silent.close(r));
    }
  });
});

describe('store settings from the environment', () => {
  it('defaults to the local folder and reads the S3 settings', () => {
    expect(storeSettingsFromEnv({})).toEqual({ driver: 'local' });
    expect(storeSettingsFromEnv({ CAYLINE_STORE: 's3', CAYLINE_S3_BUCKET: 'tb-2024', CAYLINE_S3_ENDPOINT: 'http://127.0.0.1:9000', CAYLINE_S3_PREFIX: '/cayline/' })).toEqual({
      driver: 's3',
      bucket: 'tb-2024',
      region: 'us-east-1',
      endpoint: 'http://127.0.0.1:9000',
      forcePathStyle: true,
      credentials: undefined,
      prefix: 'cayline',
    });
  });

  it('names the setting that is wrong', () => {
    expect(() => storeSettingsFromEnv({ CAYLINE_STORE: 'ftp' })).toThrow(/^CAYLINE_STORE:/);
    expect(() => storeSettingsFromEnv({ CAYLINE_STORE: 's3' })).toThrow(/^CAYLINE_S3_BUCKET:/);
    expect(() => storeSettingsFromEnv({ CAYLINE_STORE: 's3', CAYLINE_S3_BUCKET: 'b-1', CAYLINE_S3_FORCE_PATH_STYLE: 'yes' })).toThrow(/^CAYLINE_S3_FORCE_PATH_STYLE:/);
    expect(() => storeSettingsFromEnv({ CAYLINE_STORE: 's3', CAYLINE_S3_BUCKET: 'b-1', CAYLINE_S3_ACCESS_KEY_ID: 'k' })).toThrow(/CAYLINE_S3_SECRET_ACCESS_KEY/);
    expect(() => storeSettingsFromEnv({ CAYLINE_STORE: 's3', CAYLINE_S3_BUCKET: 'b-1', CAYLINE_S3_ENDPOINT: 'minio:9000' })).toThrow(/^CAYLINE_S3_ENDPOINT:/);
  });
});
