/**
 * What every file-store driver shares: key checking, and the scratch area on
 * this machine's own disk (`<storageDir>/tmp`) where uploads land, builds
 * write their pyramids and remote objects are copied for sharp. Scratch is
 * never shared between machines, whichever driver keeps the stored files.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import crypto from 'node:crypto';

export const SEGMENT = /^[A-Za-z0-9][A-Za-z0-9._-]{0,127}$/;

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

/** Every file below a local folder, as `/`-separated paths relative to it. */
export async function filesBelow(dir: string, rel = ''): Promise<string[]> {
  const out: string[] = [];
  for (const e of await fsp.readdir(path.join(dir, rel), { withFileTypes: true })) {
    const r = rel ? `${rel}/${e.name}` : e.name;
    if (e.isDirectory()) out.push(...(await filesBelow(dir, r)));
    else if (e.isFile()) out.push(r);
  }
  return out;
}

/** The local scratch area of a store (both drivers). */
export class ScratchArea {
  readonly scratchRoot: string;
  private scratchOwner: string | null = null;

  constructor(storageDir: string) {
    this.scratchRoot = path.join(storageDir, 'tmp');
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

  async listScratch() {
    const out: { name: string; modifiedAt: Date }[] = [];
    for (const name of await fsp.readdir(this.scratchRoot).catch(() => [] as string[])) {
      try {
        out.push({ name, modifiedAt: (await fsp.stat(path.join(this.scratchRoot, name))).mtime });
      } catch {
        /* removed meanwhile */
      }
    }
    return out;
  }
}
