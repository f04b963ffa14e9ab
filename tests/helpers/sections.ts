/** Helpers for section API tests: images made with sharp, multipart upload, waiting for the pyramid. */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import sharp from 'sharp';
import request from 'supertest';
import { expect } from 'vitest';
import { bearer, type TestApp } from './app';

/** A w×h image with structure (dipping bands and a gradient), as raw pixels. */
export function rawImage(w: number, h: number, channels: 1 | 3): Buffer {
  const b = Buffer.alloc(w * h * channels);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const v = 128 + 90 * Math.sin((y + 0.15 * x) / 7) * Math.cos(x / 150);
      for (let c = 0; c < channels; c++) b[(y * w + x) * channels + c] = Math.max(0, Math.min(255, Math.round(v + c * 20 - (x * 30) / w)));
    }
  }
  return b;
}

export async function makeImage(format: 'png' | 'jpeg' | 'tiff', w: number, h: number, channels: 1 | 3 = 1): Promise<Buffer> {
  let img = sharp(rawImage(w, h, channels), { raw: { width: w, height: h, channels } });
  if (channels === 1) img = img.toColourspace('b-w');
  if (format === 'png') return img.png().toBuffer();
  if (format === 'jpeg') return img.jpeg({ quality: 95 }).toBuffer();
  return img.tiff({ compression: 'deflate' }).toBuffer();
}

/** CRC-32 of PNG chunks (ISO/IEC 15948 / RFC 2083 §3.4; zlib's crc32 is the same polynomial). */
function crc32(buf: Buffer): number {
  let c = ~0;
  for (const byte of buf) {
    c ^= byte;
    for (let k = 0; k < 8; k++) c = c & 1 ? (c >>> 1) ^ 0xedb88320 : c >>> 1;
  }
  return ~c >>> 0;
}
function chunk(type: string, data: Buffer): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'latin1'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td));
  return Buffer.concat([len, td, crc]);
}

/** A tiny, well-formed PNG whose header declares `w`×`h` pixels (a decompression-bomb shape). */
export function pngDeclaring(w: number, h: number): Buffer {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(w, 0);
  ihdr.writeUInt32BE(h, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 0; // greyscale
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', zlib.deflateSync(Buffer.alloc(1024))),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}

export const FIELDS = { title: 'TB-11 test upload', lineName: 'TB-11', survey: 'TB-2024', verticalDomain: 'twt_ms', notes: 'uploaded by a test' };

export function upload(t: TestApp, token: string | null, projectId: number, file: Buffer | null, filename = 'section.png', fields: Record<string, string> = FIELDS) {
  let r = request(t.app).post(`/api/projects/${projectId}/sections`);
  if (token) r = r.set(bearer(token));
  for (const [k, v] of Object.entries(fields)) r = r.field(k, v);
  if (file) r = r.attach('image', file, filename);
  return r;
}

export async function waitForStatus(t: TestApp, token: string, id: number, timeoutMs = 45_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const r = await request(t.app).get(`/api/sections/${id}`).set(bearer(token));
    expect(r.status).toBe(200);
    if (r.body.status !== 'processing') return r.body;
    if (Date.now() > until) throw new Error(`section ${id} still processing after ${timeoutMs} ms (progress ${r.body.progress})`);
    await new Promise((res) => setTimeout(res, 200));
  }
}

export function entries(t: TestApp, sub: 'tmp' | 'sections'): string[] {
  const dir = path.join(t.storageDir, sub);
  return fs.existsSync(dir) ? fs.readdirSync(dir) : [];
}

/** The upload scratch folder is removed when the response closes: wait briefly for it. */
export async function tmpSettles(t: TestApp, ms = 3000): Promise<string[]> {
  const until = Date.now() + ms;
  while (entries(t, 'tmp').length && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
  return entries(t, 'tmp');
}

/** supertest parser that keeps binary bodies as Buffers. */
export function binary(res: request.Response, cb: (err: Error | null, body: Buffer) => void) {
  const parts: Buffer[] = [];
  res.on('data', (c: Buffer) => parts.push(c));
  res.on('end', () => cb(null, Buffer.concat(parts)));
}
