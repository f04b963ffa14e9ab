/**
 * Upload checks for section images: the type from the file's first bytes
 * (magic numbers, never the name or the browser's MIME type), a cheap
 * completeness check of the file's end, and the header read by sharp with
 * its decompression-bomb limit. Every refusal names the field `image`.
 */
import fsp from 'node:fs/promises';
import sharp, { type Metadata } from 'sharp';
import { AppError } from '../errors';
import type { SourceFormat } from '../models/section';

export interface ImageInfo {
  format: SourceFormat;
  width: number;
  height: number;
  channels: number;
  bytes: number;
}

const startsWith = (b: Buffer, sig: number[], at = 0) => b.length >= at + sig.length && sig.every((v, i) => b[at + i] === v);

/** PNG, JPEG and TIFF (classic and BigTIFF, both byte orders) by magic number; otherwise a best guess of what it is. */
export function sniffImageType(head: Buffer): { format: SourceFormat } | { other: string } {
  if (startsWith(head, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return { format: 'png' };
  if (startsWith(head, [0xff, 0xd8, 0xff])) return { format: 'jpeg' };
  if (startsWith(head, [0x49, 0x49, 0x2a, 0x00]) || startsWith(head, [0x4d, 0x4d, 0x00, 0x2a])) return { format: 'tiff' };
  if (startsWith(head, [0x49, 0x49, 0x2b, 0x00]) || startsWith(head, [0x4d, 0x4d, 0x00, 0x2b])) return { format: 'tiff' };
  const ascii = head.toString('latin1');
  if (ascii.startsWith('GIF87a') || ascii.startsWith('GIF89a')) return { other: 'a GIF image' };
  if (ascii.startsWith('BM')) return { other: 'a BMP image' };
  if (ascii.startsWith('RIFF') && ascii.slice(8, 12) === 'WEBP') return { other: 'a WebP image' };
  if (ascii.startsWith('%PDF')) return { other: 'a PDF document' };
  if (ascii.startsWith('PK\u0003\u0004')) return { other: 'a ZIP archive' };
  if (ascii.slice(4, 8) === 'ftyp') return { other: 'an HEIF/AVIF or video file' };
  if (/^[\t\n\r\x20-\x7e]*$/.test(ascii)) return { other: 'text' };
  return { other: 'an unknown format' };
}

const bad = (status: number, code: string, message: string) =>
  new AppError(status, code, `image: ${message}`, [{ path: 'image', message }]);

const PNG_IEND = [0x00, 0x00, 0x00, 0x00, 0x49, 0x45, 0x4e, 0x44, 0xae, 0x42, 0x60, 0x82];

/** The file's end shows the format's closing marker (PNG IEND chunk; JPEG end-of-image marker in the last 4 KiB). */
function looksComplete(format: SourceFormat, tail: Buffer): boolean {
  if (format === 'png') return startsWith(tail, PNG_IEND, tail.length - PNG_IEND.length);
  if (format === 'jpeg') {
    // Entropy-coded JPEG data never holds FF D9 (FF bytes are stuffed), so its presence near the end means the scan finished.
    for (let i = tail.length - 2; i >= 0; i--) if (tail[i] === 0xff && tail[i + 1] === 0xd9) return true;
    return false;
  }
  return true; // TIFF keeps its directory anywhere; damaged TIFF data is caught while decoding
}

/**
 * Check an uploaded file before any row is created. Throws AppError:
 * 400 empty / damaged, 415 not PNG/JPEG/TIFF, 413 over the pixel limit.
 */
export async function inspectImage(file: string, limits: { maxInputPixels: number }): Promise<ImageInfo> {
  const fh = await fsp.open(file, 'r');
  let head: Buffer;
  let tail: Buffer;
  let bytes: number;
  try {
    bytes = (await fh.stat()).size;
    if (bytes === 0) throw bad(400, 'validation_failed', 'the file is empty');
    head = Buffer.alloc(Math.min(32, bytes));
    await fh.read(head, 0, head.length, 0);
    tail = Buffer.alloc(Math.min(4096, bytes));
    await fh.read(tail, 0, tail.length, bytes - tail.length);
  } finally {
    await fh.close();
  }
  const sniffed = sniffImageType(head);
  if ('other' in sniffed) {
    throw bad(415, 'unsupported_image', `the file is ${sniffed.other}, not a PNG, JPEG or TIFF image (checked from its content, not its name)`);
  }
  const { format } = sniffed;
  const label = format.toUpperCase();
  if (!looksComplete(format, tail)) throw bad(400, 'invalid_image', `the ${label} file is truncated (its end marker is missing)`);

  let meta: Metadata;
  try {
    // Header only (no pixels are decoded here); the pixel limit is checked just below, and sharp's
    // limitInputPixels guards every decode in the pyramid build.
    meta = await sharp(file, { limitInputPixels: false }).metadata();
  } catch {
    throw bad(400, 'invalid_image', `the ${label} header cannot be read (the file is damaged)`);
  }
  if (meta.format !== format) {
    throw bad(400, 'invalid_image', `the content is not a readable ${label} image`);
  }
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  if (!(width > 0 && height > 0)) throw bad(400, 'invalid_image', `the ${label} header declares no size`);
  if (width * height > limits.maxInputPixels) {
    const mp = (n: number) => `${Math.round(n / 1e5) / 10} megapixels`;
    throw bad(
      413,
      'image_too_large',
      `${width} × ${height} px (${mp(width * height)}) is over the limit of ${mp(limits.maxInputPixels)}`,
    );
  }
  return { format, width, height, channels: meta.channels ?? 0, bytes };
}
