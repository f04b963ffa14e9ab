/**
 * Keeping the canvas readable zoomed out (issue #13): flank-angle labels are
 * hidden below a zoom threshold and placed without overlapping above it
 * (greedy, each label tries its own side, then above, then below, else it is
 * left out); Termination stamps closer than a few screen pixels are drawn as
 * one cluster mark with their count. Pure functions in screen pixels; the
 * static overlay calls them on every draw (a few dozen items: microseconds).
 * Cayline's own rules, sizes in CSS pixels.
 */

/** Labels are hidden below this many screen px per image px (a fitted 16 km section is far below it). */
export const LABEL_MIN_SCALE = 0.35;
/** Stamps closer than this on screen join one cluster. */
export const STAMP_CLUSTER_PX = 22;

export interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

const overlaps = (a: Box, b: Box, pad: number) => a.x0 < b.x1 + pad && b.x0 < a.x1 + pad && a.y0 < b.y1 + pad && b.y0 < a.y1 + pad;

export interface LabelIn {
  key: string;
  /** Anchor on screen (the flank's midpoint). */
  x: number;
  y: number;
  /** Text width and height in px. */
  width: number;
  height: number;
  /** Which side of the anchor the text goes. */
  side: 'left' | 'right';
}

export interface LabelOut {
  key: string;
  /** Where the text's anchor point goes (left edge for side right, right edge for side left; vertical middle). */
  x: number;
  y: number;
  align: 'left' | 'right';
}

/**
 * Place labels without overlaps. `avoid` are boxes already taken (stamps,
 * pins). Each label tries beside its anchor, then one line above, then one
 * line below; a label that fits nowhere is left out. Returns nothing when
 * `scale` is below LABEL_MIN_SCALE.
 */
export function placeLabels(labels: readonly LabelIn[], scale: number, avoid: readonly Box[] = [], gap = 10, pad = 2): LabelOut[] {
  if (!(scale >= LABEL_MIN_SCALE)) return [];
  const taken: Box[] = [...avoid];
  const out: LabelOut[] = [];
  for (const l of labels) {
    const dir = l.side === 'left' ? -1 : 1;
    const x = l.x + dir * gap;
    for (const dy of [0, -(l.height + 2), l.height + 2]) {
      const y = l.y + dy;
      const box: Box = dir < 0 ? { x0: x - l.width, x1: x, y0: y - l.height / 2, y1: y + l.height / 2 } : { x0: x, x1: x + l.width, y0: y - l.height / 2, y1: y + l.height / 2 };
      if (taken.some((t) => overlaps(t, box, pad))) continue;
      taken.push(box);
      out.push({ key: l.key, x, y, align: dir < 0 ? 'right' : 'left' });
      break;
    }
  }
  return out;
}

export interface StampIn {
  key: string;
  x: number;
  y: number;
  selected?: boolean;
}

export interface StampCluster<S extends StampIn = StampIn> {
  x: number;
  y: number;
  stamps: S[];
}

/**
 * Greedy screen-space clustering of stamps (the same rule as Note pins,
 * noteClusters.ts): each stamp joins the first cluster whose centre is within
 * `radiusPx`, else starts its own; centres are running means. A selected
 * stamp stays on its own.
 */
export function clusterStamps<S extends StampIn>(stamps: readonly S[], radiusPx = STAMP_CLUSTER_PX): StampCluster<S>[] {
  const r2 = radiusPx * radiusPx;
  const out: StampCluster<S>[] = [];
  for (const s of stamps) {
    const home = s.selected ? undefined : out.find((c) => !c.stamps[0].selected && (c.x - s.x) ** 2 + (c.y - s.y) ** 2 <= r2);
    if (home) {
      const n = home.stamps.length;
      home.x = (home.x * n + s.x) / (n + 1);
      home.y = (home.y * n + s.y) / (n + 1);
      home.stamps.push(s);
    } else out.push({ x: s.x, y: s.y, stamps: [s] });
  }
  return out;
}
