/**
 * The controlled-lists page (`/library/lists`): names of the lists, a value
 * suggested from a typed label, the add form checked with the shared schema
 * (problems keyed by field), and how many analogues use each value. Pure.
 */
import { LIST_NAMES, listItemSchema, type FacetCount, type ListName } from '../../../shared/schemas/analogues';

export const LIST_TITLES: Record<ListName, { title: string; one: string; hint: string }> = {
  setting: { title: 'Setting', one: 'setting', hint: 'Where the buildup grew: isolated or attached platform, pinnacle, bank…' },
  factory: { title: 'Carbonate factory', one: 'carbonate factory', hint: 'What produced the carbonate: tropical, cool-water, mud-mound…' },
  climate: { title: 'Climate belt', one: 'climate belt', hint: 'The climate belt at the time of growth.' },
};

/** A value (slug) from a label: lower case, accents dropped, other runs of characters to one hyphen, at most 40 characters. */
export function slugFromLabel(label: string): string {
  return label
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+/, '')
    .slice(0, 40)
    .replace(/-+$/, '');
}

export interface ListItemCheck {
  ok: boolean;
  value: { value: string; label: string } | null;
  /** Field ('value' | 'label') → message, from the shared schema. */
  errors: Partial<Record<'value' | 'label', string>>;
}

/** Check the add form with `listItemSchema` (the server's own), plus "already in this list". */
export function checkListItem(input: { value: string; label: string }, existing: readonly { value: string }[]): ListItemCheck {
  const parsed = listItemSchema.safeParse(input);
  const errors: ListItemCheck['errors'] = {};
  if (!parsed.success) {
    for (const i of parsed.error.issues) {
      const f = i.path[0];
      if ((f === 'value' || f === 'label') && !errors[f]) errors[f] = i.message;
    }
    return { ok: false, value: null, errors };
  }
  if (existing.some((e) => e.value === parsed.data.value)) {
    errors.value = `"${parsed.data.value}" is already in this list`;
    return { ok: false, value: null, errors };
  }
  return { ok: true, value: parsed.data, errors };
}

/** Analogues (of any status) per list value, from a search's facet counts; values not listed count 0. */
export function usageCounts(facets: Partial<Record<string, FacetCount[]>> | undefined): Record<ListName, Record<string, number>> {
  const out = Object.fromEntries(LIST_NAMES.map((l) => [l, {}])) as Record<ListName, Record<string, number>>;
  for (const l of LIST_NAMES) for (const f of facets?.[l] ?? []) out[l][f.value] = f.count;
  return out;
}
