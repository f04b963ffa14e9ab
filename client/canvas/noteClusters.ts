/**
 * Grouping of Note pins for drawing: pins closer on screen than `radiusPx`
 * join one cluster (drawn as one mark with the count), so when zoomed out the
 * pins never bury the traced lines under a heap of labels. Greedy and stable:
 * pins are taken by number, each joins the first cluster whose centre is
 * within the radius (centres are the running mean), else starts its own.
 * A selected pin is never swallowed: it stays on its own.
 */
export interface PinInput {
  id: number;
  number: number;
  /** Image pixels `[u, v]`. */
  at: readonly [number, number];
}

export interface PinCluster<P extends PinInput = PinInput> {
  /** Image pixels of the mark (the pin itself, or the members' mean). */
  at: [number, number];
  pins: P[];
}

/**
 * Cluster pins at a zoom of `scaleX`, `scaleY` screen px per image px (scaleY
 * includes any vertical display stretch).
 */
export function clusterPins<P extends PinInput>(pins: readonly P[], scaleX: number, scaleY: number, radiusPx = 26, keepAlone: number | null = null): PinCluster<P>[] {
  if (!(scaleX > 0) || !(scaleY > 0)) throw new Error('clusterPins: scales must be > 0');
  const r2 = radiusPx * radiusPx;
  const out: { sx: number; sy: number; pins: P[] }[] = [];
  const sorted = [...pins].sort((a, b) => a.number - b.number);
  for (const p of sorted) {
    const sx = p.at[0] * scaleX;
    const sy = p.at[1] * scaleY;
    let home: (typeof out)[number] | undefined;
    if (p.id !== keepAlone)
      home = out.find((c) => !(c.pins.length === 1 && c.pins[0].id === keepAlone) && (c.sx - sx) ** 2 + (c.sy - sy) ** 2 <= r2);
    if (home) {
      const n = home.pins.length;
      home.sx = (home.sx * n + sx) / (n + 1);
      home.sy = (home.sy * n + sy) / (n + 1);
      home.pins.push(p);
    } else out.push({ sx, sy, pins: [p] });
  }
  return out.map((c) => (c.pins.length === 1 ? { at: [c.pins[0].at[0], c.pins[0].at[1]], pins: c.pins } : { at: [c.sx / scaleX, c.sy / scaleY], pins: c.pins }));
}
