/**
 * Grid clustering of map points in screen pixels: points whose projected
 * positions fall in the same square cell of `cellPx` become one cluster drawn
 * at the members' mean position. Re-run after every zoom so clusters split as
 * the map is enlarged. Pure (no DOM), deterministic: clusters come out in the
 * order of their first member in the input.
 */
export interface ScreenPoint<T = unknown> {
  id: number | string;
  x: number;
  y: number;
  data?: T;
}

export interface Cluster<T = unknown> {
  /** Stable key: the cell for a cluster, `p:<id>` for a lone point. */
  key: string;
  x: number;
  y: number;
  count: number;
  members: ScreenPoint<T>[];
}

export function clusterPoints<T>(points: readonly ScreenPoint<T>[], cellPx: number): Cluster<T>[] {
  if (!(cellPx > 0)) throw new RangeError('cellPx must be a positive number');
  const cells = new Map<string, ScreenPoint<T>[]>();
  for (const p of points) {
    if (!Number.isFinite(p.x) || !Number.isFinite(p.y)) continue;
    const key = `${Math.floor(p.x / cellPx)}:${Math.floor(p.y / cellPx)}`;
    const list = cells.get(key);
    if (list) list.push(p);
    else cells.set(key, [p]);
  }
  const out: Cluster<T>[] = [];
  for (const [cell, members] of cells) {
    let sx = 0;
    let sy = 0;
    for (const m of members) {
      sx += m.x;
      sy += m.y;
    }
    out.push({
      key: members.length === 1 ? `p:${members[0].id}` : `c:${cell}`,
      x: sx / members.length,
      y: sy / members.length,
      count: members.length,
      members,
    });
  }
  return out;
}

/**
 * Merge clusters whose drawn circles would overlap (centre distance below the
 * sum of their radii plus `gapPx`), repeatedly, so no marker hides another's
 * count. Merged clusters sit at the mean of all their members. Deterministic:
 * the earliest pair in input order merges first.
 */
export function mergeOverlapping<T>(clusters: readonly Cluster<T>[], radius: (count: number) => number = clusterRadius, gapPx = 2): Cluster<T>[] {
  const out = clusters.map((c) => ({ ...c, members: [...c.members] }));
  let merged = true;
  while (merged) {
    merged = false;
    outer: for (let i = 0; i < out.length; i++) {
      for (let j = i + 1; j < out.length; j++) {
        const a = out[i];
        const b = out[j];
        if (Math.hypot(a.x - b.x, a.y - b.y) >= radius(a.count) + radius(b.count) + gapPx) continue;
        const members = [...a.members, ...b.members];
        const count = a.count + b.count;
        out[i] = {
          key: a.key.startsWith('c:') ? a.key : `c:${a.key}`,
          x: (a.x * a.count + b.x * b.count) / count,
          y: (a.y * a.count + b.y * b.count) / count,
          count,
          members,
        };
        out.splice(j, 1);
        merged = true;
        break outer;
      }
    }
  }
  return out;
}

/** Marker radius in pixels for a cluster of `count` points (area grows with the count, capped). */
export function clusterRadius(count: number): number {
  if (count <= 1) return 5;
  return Math.min(22, 8 + 3 * Math.log2(count));
}
