/**
 * Web Worker of trace assist: holds the grey pixels of the full-resolution
 * tiles the page sent for the open section and answers path / auto-extend /
 * snap tasks (protocol.ts) off the main thread. For a SEG-Y section the page
 * sends blocks of true amplitudes instead. Tiles arrive as ImageBitmaps
 * and are decoded once through an OffscreenCanvas (the red channel of the
 * grey JPEG); at most MAX_TILES are kept (oldest dropped first).
 */
import { TiledGreySource } from '../../../shared/trace-assist/source';
import { answerAssist, type AssistReply, type AssistRequest } from './protocol';

const MAX_TILES = 160; // 160 × 512² bytes ≈ 40 MiB

let source: TiledGreySource | null = null;
let sectionKey = '';

function decode(bitmap: ImageBitmap): Uint8Array {
  const c = new OffscreenCanvas(bitmap.width, bitmap.height);
  const ctx = c.getContext('2d', { willReadFrequently: true })!;
  ctx.drawImage(bitmap, 0, 0);
  const rgba = ctx.getImageData(0, 0, bitmap.width, bitmap.height).data;
  const grey = new Uint8Array(bitmap.width * bitmap.height);
  for (let i = 0, j = 0; i < grey.length; i++, j += 4) grey[i] = rgba[j];
  return grey;
}

export function handle(msg: AssistRequest): AssistReply | null {
  if (msg.type === 'section') {
    if (msg.key !== sectionKey || !source) {
      sectionKey = msg.key;
      source = new TiledGreySource(msg.width, msg.height, msg.tileSpan, msg.polarity);
    }
    return null;
  }
  if (msg.type === 'tile') {
    if (!source || msg.key !== sectionKey) return null;
    source.put(msg.col, msg.row, { x: msg.x, y: msg.y, width: msg.width, height: msg.height, grey: decode(msg.bitmap) });
    source.trim(MAX_TILES);
    return null;
  }
  if (msg.type === 'amplitudes') {
    if (!source || msg.key !== sectionKey) return null;
    source.put(msg.col, msg.row, { x: msg.x, y: msg.y, width: msg.width, height: msg.height, amplitude: msg.values });
    source.trim(MAX_TILES * 4);
    return null;
  }
  if (!source) return { type: 'result', id: msg.id, ok: false, message: 'No section is open for trace assist.' };
  try {
    const { result, missing } = answerAssist(source, msg.task);
    return { type: 'result', id: msg.id, ok: true, result, missing };
  } catch (e) {
    return { type: 'result', id: msg.id, ok: false, message: e instanceof Error ? e.message : String(e) };
  }
}

interface WorkerScope {
  onmessage: ((e: MessageEvent<AssistRequest>) => void) | null;
  postMessage(message: AssistReply): void;
}

const g = globalThis as unknown as { WorkerGlobalScope?: abstract new () => unknown };
if (typeof g.WorkerGlobalScope === 'function' && globalThis instanceof g.WorkerGlobalScope) {
  const scope = globalThis as unknown as WorkerScope;
  scope.onmessage = (e) => {
    const reply = handle(e.data);
    if (reply) scope.postMessage(reply);
  };
}
