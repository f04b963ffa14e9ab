/** Plain helpers of the Ledger (what each row shows), kept apart from the component for tests. */
import type { EditorBuildup, EditorCycle, Pt } from '../../../shared/editor/model';

export type CyclePart = 'top' | 'marginLeft' | 'marginRight' | 'flankLeft' | 'flankRight';

export const CYCLE_PARTS: readonly { part: CyclePart; label: string; required: boolean }[] = [
  { part: 'top', label: 'Top traced (2+ points)', required: true },
  { part: 'marginLeft', label: 'Left Margin pin', required: true },
  { part: 'marginRight', label: 'Right Margin pin', required: true },
  { part: 'flankLeft', label: 'Left flank traced', required: false },
  { part: 'flankRight', label: 'Right flank traced', required: false },
];

const hasLine = (pts: readonly Pt[] | null) => !!pts && pts.length >= 2;

/** Which parts of a cycle are in place. */
export function cycleCompleteness(c: EditorCycle): Record<CyclePart, boolean> {
  return {
    top: hasLine(c.top),
    marginLeft: c.marginLeft !== null,
    marginRight: c.marginRight !== null,
    flankLeft: hasLine(c.flankLeft),
    flankRight: hasLine(c.flankRight),
  };
}

/** The base in a few words: "not traced", "1 point: trace one more", "traced, 12 points". */
export function baseStatus(b: EditorBuildup): { ok: boolean; text: string } {
  const n = b.base.length;
  if (n === 0) return { ok: false, text: 'Base not traced' };
  if (n === 1) return { ok: false, text: 'Base: 1 point, needs one more' };
  if (b.base.every((p) => p[0] === b.base[0][0])) return { ok: false, text: `Base: ${n} points on one vertical, needs a width` };
  return { ok: true, text: `Base traced, ${n} points` };
}

export const SYSTEMS_TRACTS = ['LST', 'TST', 'HST'] as const;

/** Value of the "no systems tract" option (select values cannot be null). */
export const NO_TRACT = '';

/** Options of the systems tract select (`NO_TRACT` for none); a free label already on the cycle stays selectable. */
export function tractOptions(current: string | null): { label: string; value: string }[] {
  const opts: { label: string; value: string }[] = [
    { label: '—', value: NO_TRACT },
    ...SYSTEMS_TRACTS.map((t) => ({ label: t, value: t as string })),
  ];
  if (current !== null && !SYSTEMS_TRACTS.includes(current as (typeof SYSTEMS_TRACTS)[number])) opts.push({ label: current, value: current });
  return opts;
}

/** `[u, v]` as "u 1 204, v 388" (whole pixels). */
export function formatPixel(p: Pt): string {
  return `u ${Math.round(p[0])}, v ${Math.round(p[1])}`;
}

/** Next free default name "Buildup N" among the names in use. */
export function nextBuildupName(names: readonly string[]): string {
  const used = new Set(names.map((n) => n.trim().toLowerCase()));
  for (let i = names.length + 1; ; i++) if (!used.has(`buildup ${i}`)) return `Buildup ${i}`;
}
