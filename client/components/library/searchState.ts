/**
 * The library search page keeps its whole state in the URL so a search can be
 * shared: the filters in the API's own URL form (searchQueryToUrl /
 * searchQueryFromUrl in shared/schemas/analogues.ts), plus the page's view
 * settings (`view`, crossplot axes and colour). Pure functions over plain
 * objects; the page reads `route.query` and pushes what these return.
 */
import {
  analogueSearchSchema,
  searchQueryFromUrl,
  searchQueryToUrl,
  type AnalogueSearchQuery,
  type Facet,
  type MetricKey,
  type RangeField,
} from '../../../shared/schemas/analogues';
import { METRIC_KEYS } from '../../../shared/schemas/analogues';
import type { GeoFilter } from './geo';

export type RouteQuery = Record<string, string | null | (string | null)[] | undefined>;

export const VIEWS = ['list', 'map', 'plots'] as const;
export type LibraryView = (typeof VIEWS)[number];

/** What the page shows besides the filters. */
export interface ViewState {
  view: LibraryView;
  x: MetricKey;
  y: MetricKey;
  /** A tag facet that colours the crossplot points. */
  color: 'class' | 'setting' | 'factory' | 'climate' | 'period';
  /** Metric of the histogram. */
  hist: MetricKey;
  /** An analogue to highlight in the plots and on the map. */
  mark: number | null;
}

export const DEFAULT_VIEW: ViewState = { view: 'list', x: 'baseWidthM', y: 'heightM', color: 'class', hist: 'heightM', mark: null };
const COLOR_KEYS = ['class', 'setting', 'factory', 'climate', 'period'] as const;
const VIEW_KEYS = ['view', 'x', 'y', 'color', 'hist', 'mark'];

function toParams(query: RouteQuery): URLSearchParams {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) {
    if (VIEW_KEYS.includes(k) || v === undefined || v === null) continue;
    for (const one of Array.isArray(v) ? v : [v]) if (one !== null) p.append(k, one);
  }
  return p;
}

export interface ParsedSearch {
  search: AnalogueSearchQuery;
  /** Parameters that were not understood, as "field.path: reason"; they are left out of the search. */
  problems: string[];
}

/**
 * Read the filters from the route query. A bad parameter (a range that is
 * not a number, an unknown class…) is dropped and reported, and the rest of
 * the search still runs.
 */
export function parseSearch(query: RouteQuery): ParsedSearch {
  const raw = searchQueryFromUrl(toParams(query));
  const problems: string[] = [];
  for (let attempt = 0; attempt < 20; attempt++) {
    const r = analogueSearchSchema.safeParse(raw);
    if (r.success) return { search: r.data, problems };
    for (const issue of r.error.issues) {
      const path = issue.path.map(String);
      problems.push(`${path.join('.') || 'query'}: ${issue.message}`);
      const [top, second] = path;
      if (top === 'ranges' && second !== undefined && raw.ranges && typeof raw.ranges === 'object') {
        delete (raw.ranges as Record<string, unknown>)[second];
      } else if (top !== undefined) {
        delete raw[top];
      } else {
        return { search: analogueSearchSchema.parse({}), problems };
      }
    }
  }
  return { search: analogueSearchSchema.parse({}), problems };
}

const isMetric = (v: unknown): v is MetricKey => typeof v === 'string' && (METRIC_KEYS as readonly string[]).includes(v);
const one = (v: RouteQuery[string]): string | undefined => (Array.isArray(v) ? (v[0] ?? undefined) : (v ?? undefined));

/** The page's view settings from the route query; unknown values fall back to the defaults. */
export function parseView(query: RouteQuery): ViewState {
  const view = one(query.view);
  const color = one(query.color);
  const mark = Number(one(query.mark));
  return {
    view: (VIEWS as readonly string[]).includes(view ?? '') ? (view as LibraryView) : DEFAULT_VIEW.view,
    x: isMetric(one(query.x)) ? (one(query.x) as MetricKey) : DEFAULT_VIEW.x,
    y: isMetric(one(query.y)) ? (one(query.y) as MetricKey) : DEFAULT_VIEW.y,
    color: (COLOR_KEYS as readonly string[]).includes(color ?? '') ? (color as ViewState['color']) : DEFAULT_VIEW.color,
    hist: isMetric(one(query.hist)) ? (one(query.hist) as MetricKey) : DEFAULT_VIEW.hist,
    mark: Number.isInteger(mark) && mark > 0 ? mark : null,
  };
}

/** The route query for a search and view; defaults are left out so shared links stay short. */
export function toRouteQuery(search: Partial<AnalogueSearchQuery>, view: Partial<ViewState> = {}): Record<string, string> {
  const out: Record<string, string> = Object.fromEntries(searchQueryToUrl(search).entries());
  const v = { ...DEFAULT_VIEW, ...view };
  if (v.view !== DEFAULT_VIEW.view) out.view = v.view;
  if (v.x !== DEFAULT_VIEW.x) out.x = v.x;
  if (v.y !== DEFAULT_VIEW.y) out.y = v.y;
  if (v.color !== DEFAULT_VIEW.color) out.color = v.color;
  if (v.hist !== DEFAULT_VIEW.hist) out.hist = v.hist;
  if (v.mark) out.mark = String(v.mark);
  return out;
}

type ListFacet = Exclude<Facet, never>;

/** Add or remove one facet value; any change of filters goes back to page 1. */
export function toggleFacet(s: AnalogueSearchQuery, facet: ListFacet, value: string): AnalogueSearchQuery {
  const current = (s[facet] ?? []) as string[];
  const next = current.includes(value) ? current.filter((v) => v !== value) : [...current, value];
  return { ...s, [facet]: next.length ? next : undefined, page: 1 } as AnalogueSearchQuery;
}

/** Set (or clear, with both undefined) a numeric range; page back to 1. */
export function withRange(s: AnalogueSearchQuery, field: RangeField, min: number | undefined, max: number | undefined): AnalogueSearchQuery {
  const ranges = { ...(s.ranges ?? {}) };
  if (min === undefined && max === undefined) delete ranges[field];
  else ranges[field] = { min, max };
  return { ...s, ranges: Object.keys(ranges).length ? ranges : undefined, page: 1 };
}

/** The map area of a search (its bbox or near filter), or null. */
export function areaOf(s: Pick<AnalogueSearchQuery, 'bbox' | 'near'>): GeoFilter | null {
  if (s.bbox) return { kind: 'box', west: s.bbox[0], south: s.bbox[1], east: s.bbox[2], north: s.bbox[3] };
  if (s.near) return { kind: 'radius', lon: s.near.lon, lat: s.near.lat, km: s.near.km };
  return null;
}

/** The search with the map area replaced (a box and a radius exclude each other); page back to 1. */
export function withArea(s: AnalogueSearchQuery, area: GeoFilter | null): AnalogueSearchQuery {
  const next: AnalogueSearchQuery = { ...s, bbox: undefined, near: undefined, page: 1 };
  if (area?.kind === 'box') next.bbox = [area.west, area.south, area.east, area.north];
  if (area?.kind === 'radius') next.near = { lat: area.lat, lon: area.lon, km: area.km };
  return next;
}

/** How many filters are active (for the "Clear filters" button and the empty state). */
export function activeFilterCount(s: AnalogueSearchQuery): number {
  let n = s.q ? 1 : 0;
  for (const f of ['setting', 'factory', 'climate', 'class', 'period', 'tags'] as const) n += s[f]?.length ?? 0;
  n += Object.keys(s.ranges ?? {}).length;
  if (s.bbox || s.near) n++;
  if (s.source) n++;
  if (s.status !== 'accepted') n++;
  return n;
}

/** Only the filters (sort, page and size kept), for "Clear filters". */
export function clearedFilters(s: AnalogueSearchQuery): AnalogueSearchQuery {
  return analogueSearchSchema.parse({ sort: s.sort, dir: s.dir, pageSize: s.pageSize });
}
