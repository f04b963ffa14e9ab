/**
 * Draws a section's tile pyramid into one Konva layer, loading only what the
 * view needs.
 *
 * - The stage carries the view transform, so every node here is placed in
 *   image pixels (see viewport.ts) and panning moves no node at all.
 * - On each `update(view, box)` the level is picked from the scale, the
 *   visible tile range (plus one ring of prefetch) is computed, tiles that
 *   left the range are cancelled and missing ones are queued nearest-first
 *   with at most `MAX_IN_FLIGHT` downloads.
 * - Underneath: the whole-image preview, then the nearest coarser cached
 *   tile of each still-missing tile, so the picture never goes blank while
 *   finer tiles arrive.
 * - Konva.Image nodes come from a pool that only grows to the most tiles
 *   ever shown at once; nodes are re-pointed, never rebuilt, and the layer
 *   is redrawn with `batchDraw` (one draw per animation frame at most).
 */
import Konva from 'konva';
import type { TilesDescriptor } from '../../shared/schemas/sections';
import { cachedSectionImage, loadSectionImage, peekSectionImage, tileUrl, type SectionBitmap } from '../api/sections';
import {
  chooseLevel,
  parentTile,
  tilePlacement,
  visibleRect,
  visibleTileRange,
  type Pyramid,
  type Size,
  type View,
} from './viewport';

const MAX_IN_FLIGHT = 6;
/** From this scale on (screen px per image px) pixels are drawn as crisp squares. */
const CRISP_FROM_SCALE = 2;

export interface TileStats {
  level: number;
  /** Tiles of the current level intersecting the view. */
  visible: number;
  /** Of those, how many are drawn. */
  drawn: number;
  inFlight: number;
  queued: number;
  /** Konva.Image nodes created so far (the pool's size). */
  poolSize: number;
  previewShown: boolean;
}

interface Wanted {
  key: string;
  level: number;
  col: number;
  row: number;
  url: string;
  /** Squared distance of the tile centre from the view centre (image px). */
  dist: number;
  visible: boolean;
}

export function pyramidOf(t: TilesDescriptor): Pyramid {
  return {
    width: t.width,
    height: t.height,
    tileSize: t.tileSize,
    overlap: t.overlap ?? 0,
    maxLevel: t.maxLevel,
    minLevel: t.minLevel ?? 0,
  };
}

export class TileRenderer {
  private readonly group = new Konva.Group({ listening: false });
  private readonly preview = new Konva.Image({ image: undefined, listening: false, visible: false, perfectDrawEnabled: false });
  private readonly pool: Konva.Image[] = [];
  private tiles: TilesDescriptor | null = null;
  private pyramid: Pyramid | null = null;
  private previewUrl: string | null = null;
  private previewBitmap: SectionBitmap | null = null;
  private previewAbort: AbortController | null = null;
  private readonly inFlight = new Map<string, AbortController>();
  private queue: Wanted[] = [];
  private lastView: View | null = null;
  private lastBox: Size | null = null;
  private lastRatio = 1;
  private drawKey = '';
  private frame = 0;
  private destroyed = false;
  private current: TileStats = { level: 0, visible: 0, drawn: 0, inFlight: 0, queued: 0, poolSize: 0, previewShown: false };

  constructor(
    private readonly layer: Konva.Layer,
    private readonly onChange: (stats: TileStats) => void = () => {},
  ) {
    layer.listening(false);
    this.group.add(this.preview);
    layer.add(this.group);
  }

  /** Point the renderer at a section's pyramid and preview (null clears it). */
  setSource(tiles: TilesDescriptor | null, previewUrl: string | null): void {
    const same = tiles?.urlTemplate === this.tiles?.urlTemplate && tiles?.width === this.tiles?.width && previewUrl === this.previewUrl;
    if (same) return;
    this.cancelAll();
    this.tiles = tiles;
    this.pyramid = tiles ? pyramidOf(tiles) : null;
    this.drawKey = '';
    for (const n of this.pool) n.visible(false);
    this.setPreview(previewUrl);
    if (this.lastView && this.lastBox) this.update(this.lastView, this.lastBox, this.lastRatio);
    else this.layer.batchDraw();
  }

  private setPreview(url: string | null): void {
    this.previewAbort?.abort();
    this.previewAbort = null;
    this.previewUrl = url;
    this.previewBitmap = null;
    this.preview.visible(false);
    if (!url || !this.tiles) return;
    const hit = cachedSectionImage(url);
    if (hit) {
      this.showPreview(hit);
      return;
    }
    const c = new AbortController();
    this.previewAbort = c;
    loadSectionImage(url, c.signal).then(
      (bmp) => {
        if (this.destroyed || c.signal.aborted || url !== this.previewUrl) return;
        this.showPreview(bmp);
        this.scheduleDraw();
      },
      () => {
        /* the tiles still draw; the preview is only an underlay */
      },
    );
  }

  private showPreview(bmp: SectionBitmap): void {
    if (!this.tiles) return;
    this.previewBitmap = bmp;
    this.preview.setAttrs({ image: bmp, x: 0, y: 0, width: this.tiles.width, height: this.tiles.height, visible: true });
  }

  /** Recompute what the view needs; cheap when nothing changed. */
  update(view: View, box: Size, pixelRatio = 1): void {
    this.lastView = { ...view };
    this.lastBox = { width: box.width, height: box.height };
    this.lastRatio = pixelRatio;
    const crisp = view.scale >= CRISP_FROM_SCALE;
    if (this.layer.imageSmoothingEnabled() === crisp) this.layer.imageSmoothingEnabled(!crisp);
    const p = this.pyramid;
    if (!p || !this.tiles || box.width <= 0 || box.height <= 0) {
      this.publish();
      return;
    }
    // With a vertical display stretch the finer of the two axes decides the level.
    const level = chooseLevel(p, view.scale * Math.max(1, view.stretchY ?? 1), pixelRatio);
    const rect = visibleRect(view, box);
    const inner = visibleTileRange(p, level, rect, 0);
    const outer = visibleTileRange(p, level, rect, 1);
    const cx = (rect.x0 + rect.x1) / 2;
    const cy = (rect.y0 + rect.y1) / 2;

    const wanted = new Map<string, Wanted>();
    if (!outer.empty) {
      for (let row = outer.row0; row <= outer.row1; row++) {
        for (let col = outer.col0; col <= outer.col1; col++) {
          const key = `${level}/${col}/${row}`;
          const pl = tilePlacement(p, level, col, row);
          const dx = pl.x + pl.width / 2 - cx;
          const dy = pl.y + pl.height / 2 - cy;
          const visible = !inner.empty && col >= inner.col0 && col <= inner.col1 && row >= inner.row0 && row <= inner.row1;
          wanted.set(key, { key, level, col, row, url: tileUrl(this.tiles.urlTemplate, level, col, row), dist: dx * dx + dy * dy, visible });
        }
      }
    }

    // Cancel downloads nobody needs any more.
    for (const [key, c] of this.inFlight) {
      if (!wanted.has(key)) {
        c.abort();
        this.inFlight.delete(key);
      }
    }
    // Queue what is missing, visible tiles first, then nearest first.
    this.queue = [...wanted.values()]
      .filter((w) => !this.inFlight.has(w.key) && !peekSectionImage(w.url))
      .sort((a, b) => Number(b.visible) - Number(a.visible) || a.dist - b.dist);
    this.pump();
    this.assign(level, [...wanted.values()].filter((w) => w.visible), p);
  }

  private pump(): void {
    while (this.inFlight.size < MAX_IN_FLIGHT && this.queue.length > 0) {
      const w = this.queue.shift()!;
      if (peekSectionImage(w.url)) continue;
      const c = new AbortController();
      this.inFlight.set(w.key, c);
      loadSectionImage(w.url, c.signal).then(
        () => {
          if (this.inFlight.get(w.key) === c) this.inFlight.delete(w.key);
          if (this.destroyed) return;
          this.drawKey = ''; // a tile arrived: reassign nodes
          this.scheduleDraw();
          this.pump();
        },
        () => {
          if (this.inFlight.get(w.key) === c) this.inFlight.delete(w.key);
          if (!this.destroyed) this.pump();
        },
      );
    }
  }

  /** Point pool nodes at the visible tiles (and coarser stand-ins for missing ones). */
  private assign(level: number, visible: Wanted[], p: Pyramid): void {
    const t = this.tiles!;
    const ready: { bmp: SectionBitmap; level: number; col: number; row: number }[] = [];
    const standIns = new Map<string, { bmp: SectionBitmap; level: number; col: number; row: number }>();
    for (const w of visible) {
      const bmp = cachedSectionImage(w.url);
      if (bmp) {
        ready.push({ bmp, level: w.level, col: w.col, row: w.row });
        continue;
      }
      let up = parentTile(p, w.level, w.col, w.row);
      while (up) {
        const key = `${up.level}/${up.col}/${up.row}`;
        if (standIns.has(key)) break;
        const pb = peekSectionImage(tileUrl(t.urlTemplate, up.level, up.col, up.row));
        if (pb) {
          standIns.set(key, { bmp: pb, ...up });
          break;
        }
        up = parentTile(p, up.level, up.col, up.row);
      }
    }
    // Coarse first (drawn underneath), then the current level.
    const draw = [...[...standIns.values()].sort((a, b) => a.level - b.level), ...ready];
    const key = `${level}|${draw.map((d) => `${d.level}/${d.col}/${d.row}`).join(',')}`;
    this.current = {
      level,
      visible: visible.length,
      drawn: ready.length,
      inFlight: this.inFlight.size,
      queued: this.queue.length,
      poolSize: this.pool.length,
      previewShown: this.preview.visible(),
    };
    if (key === this.drawKey) {
      this.publish();
      return;
    }
    this.drawKey = key;
    while (this.pool.length < draw.length) {
      const node = new Konva.Image({ image: undefined, listening: false, perfectDrawEnabled: false, visible: false });
      this.pool.push(node);
      this.group.add(node);
    }
    draw.forEach((d, i) => {
      const pl = tilePlacement(p, d.level, d.col, d.row);
      this.pool[i].setAttrs({ image: d.bmp, x: pl.x, y: pl.y, width: pl.width, height: pl.height, visible: true });
    });
    for (let i = draw.length; i < this.pool.length; i++) {
      if (this.pool[i].visible()) this.pool[i].setAttrs({ visible: false, image: undefined });
    }
    this.current.poolSize = this.pool.length;
    this.layer.batchDraw();
    this.publish();
  }

  private publish(): void {
    this.current.inFlight = this.inFlight.size;
    this.current.queued = this.queue.length;
    this.current.previewShown = this.preview.visible() && !!this.previewBitmap;
    this.onChange({ ...this.current });
  }

  private scheduleDraw(): void {
    if (this.frame || this.destroyed) return;
    this.frame = requestAnimationFrame(() => {
      this.frame = 0;
      if (this.lastView && this.lastBox) this.update(this.lastView, this.lastBox, this.lastRatio);
      else this.layer.batchDraw();
    });
  }

  get stats(): TileStats {
    return { ...this.current };
  }

  private cancelAll(): void {
    for (const c of this.inFlight.values()) c.abort();
    this.inFlight.clear();
    this.queue = [];
  }

  destroy(): void {
    this.destroyed = true;
    if (this.frame) cancelAnimationFrame(this.frame);
    this.cancelAll();
    this.previewAbort?.abort();
    this.group.destroy();
  }
}
