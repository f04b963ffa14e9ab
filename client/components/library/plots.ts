/**
 * ECharts options for the library's crossplot (any two metrics, points
 * coloured by a tag) and histogram (one metric). Pure: built from plain search
 * rows, so they are unit-tested without a browser.
 */
import type { EChartsOption } from 'echarts';
import { METRICS, type AnalogueSummary, type MetricKey } from '../../../shared/schemas/analogues';
import { CLASS_BADGE } from '../../canvas/palette';
import { CYCLE_COLOURS } from '../../canvas/palette';
import { palette } from '../../theme';
import { histogram, wantsLogAxis } from './axes';
import { formatNumber, formatScientific } from '../../../shared/format';

export type ColourBy = 'class' | 'setting' | 'factory' | 'climate' | 'period';

export function metricLabel(key: MetricKey): string {
  const m = METRICS.find((x) => x.key === key);
  if (!m) return key;
  return m.unit ? `${m.label} (${m.unit})` : m.label;
}

/** Colour of a tag value: the class badge colours for classes, else the Okabe–Ito set in order of first appearance. */
export function tagColour(by: ColourBy, value: string | null, order: string[]): string {
  if (value === null) return '#9aa5ae';
  if (by === 'class' && value in CLASS_BADGE) return CLASS_BADGE[value as keyof typeof CLASS_BADGE].fill;
  const i = order.indexOf(value);
  return CYCLE_COLOURS[(i < 0 ? 0 : i) % CYCLE_COLOURS.length];
}

export interface CrossplotInput {
  items: AnalogueSummary[];
  x: MetricKey;
  y: MetricKey;
  colourBy: ColourBy;
  /** Labels of tag values (controlled lists); the value itself when absent. */
  labels?: Record<string, string>;
  /** An analogue to draw large in sand with its name. */
  highlightId?: number | null;
  /** A point that is not in the library (the buildup the Look-alikes were opened from). */
  extra?: { name: string; x: number | null | undefined; y: number | null | undefined } | null;
}

/** Data item of a crossplot point: [x, y, id, name]. */
export type PointDatum = [number, number, number, string];

export function crossplotOption(input: CrossplotInput): { option: EChartsOption; xLog: boolean; yLog: boolean; plotted: number; missing: number; marked: string[] } {
  const { items, x, y, colourBy, labels = {}, highlightId = null, extra = null } = input;
  const usable = items.filter((a) => Number.isFinite(a.metrics[x] ?? NaN) && Number.isFinite(a.metrics[y] ?? NaN));
  const xs = usable.map((a) => a.metrics[x] as number);
  const ys = usable.map((a) => a.metrics[y] as number);
  if (extra && Number.isFinite(extra.x ?? NaN) && Number.isFinite(extra.y ?? NaN)) {
    xs.push(extra.x as number);
    ys.push(extra.y as number);
  }
  const xLog = wantsLogAxis(xs);
  const yLog = wantsLogAxis(ys);

  const groups = new Map<string | null, PointDatum[]>();
  const order: string[] = [];
  for (const a of usable) {
    const v = (a[colourBy] as string | null) ?? null;
    if (v !== null && !order.includes(v)) order.push(v);
    const list = groups.get(v) ?? [];
    list.push([a.metrics[x] as number, a.metrics[y] as number, a.id, a.name]);
    groups.set(v, list);
  }
  const keys = [...order.sort((a, b) => a.localeCompare(b)), ...(groups.has(null) ? [null] : [])];
  const series: NonNullable<EChartsOption['series']> = keys.map((k) => ({
    type: 'scatter' as const,
    name: k === null ? 'untagged' : (labels[k] ?? k),
    data: groups.get(k) ?? [],
    symbolSize: 8,
    itemStyle: { color: tagColour(colourBy, k, order), opacity: 0.85, borderColor: '#fff', borderWidth: 0.5 },
    emphasis: { scale: 1.6 },
  }));
  const hl = highlightId !== null ? usable.find((a) => a.id === highlightId) : undefined;
  const marked: PointDatum[] = [];
  if (hl) marked.push([hl.metrics[x] as number, hl.metrics[y] as number, hl.id, hl.name]);
  if (extra && Number.isFinite(extra.x ?? NaN) && Number.isFinite(extra.y ?? NaN)) marked.push([extra.x as number, extra.y as number, 0, extra.name]);
  if (marked.length) {
    series.push({
      type: 'scatter',
      name: 'this buildup',
      data: marked,
      symbol: 'diamond',
      symbolSize: 18,
      z: 10,
      itemStyle: { color: palette.sand, borderColor: palette.ink, borderWidth: 1.5 },
      label: { show: true, position: 'top', distance: 8, formatter: (p: { data: unknown }) => (p.data as PointDatum)[3], color: palette.ink, fontWeight: 600 },
    });
  }
  const axis = (key: MetricKey, log: boolean) => ({
    type: log ? ('log' as const) : ('value' as const),
    name: `${metricLabel(key)}${log ? ' · log' : ''}`,
    nameLocation: 'middle' as const,
    scale: !log,
    axisLabel: { formatter: (v: number) => fmt(v) }, // "16 000", as the tables write it
    axisLine: { lineStyle: { color: '#8795a1' } },
    splitLine: { lineStyle: { color: '#eef2f4' } },
  });
  const option: EChartsOption = {
    animation: false,
    grid: { left: 70, right: 24, top: 28, bottom: 84 },
    legend: { bottom: 0, type: 'scroll' },
    tooltip: {
      trigger: 'item',
      formatter: (p: unknown) => {
        const d = (p as { data: PointDatum }).data;
        return `<b>${escapeHtml(d[3])}</b><br/>${escapeHtml(metricLabel(x))}: ${fmt(d[0])}<br/>${escapeHtml(metricLabel(y))}: ${fmt(d[1])}`;
      },
    },
    xAxis: { ...axis(x, xLog), nameGap: 30 },
    yAxis: { ...axis(y, yLog), nameGap: 52 },
    series,
  };
  return { option, xLog, yLog, plotted: usable.length, missing: items.length - usable.length, marked: marked.map((d) => d[3]) };
}

export function histogramOption(items: AnalogueSummary[], key: MetricKey): { option: EChartsOption; log: boolean; counted: number } {
  const values = items.map((a) => a.metrics[key]);
  const log = wantsLogAxis(values);
  const bins = histogram(values, log);
  const counted = bins.reduce((s, b) => s + b.count, 0);
  const option: EChartsOption = {
    animation: false,
    grid: { left: 56, right: 20, top: 36, bottom: 64 },
    tooltip: { trigger: 'axis', axisPointer: { type: 'shadow' } },
    xAxis: {
      type: 'category',
      data: bins.map((b) => `${fmt(b.from)}–${fmt(b.to)}`),
      name: `${metricLabel(key)}${log ? ' · log bins' : ''}`,
      nameLocation: 'middle',
      nameGap: 44,
      axisLabel: { rotate: 30, fontSize: 10 },
    },
    yAxis: { type: 'value', name: 'analogues', minInterval: 1 },
    series: [{ type: 'bar', data: bins.map((b) => b.count), itemStyle: { color: palette.lagoon }, barCategoryGap: '8%' }],
  };
  return { option, log, counted };
}

/**
 * Three significant figures in the house style of the Readings and reports
 * (shared/format.ts): thousands grouped with a thin space, a true minus
 * sign, at most 3 decimals, trailing zeros dropped; very large or very small
 * values as "3.20 × 10⁹".
 */
export function fmt(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e7 || a < 1e-3)) return formatScientific(v, 3);
  const r = Number(v.toPrecision(3));
  const decimals = r === 0 ? 0 : Math.min(3, Math.max(0, 2 - Math.floor(Math.log10(Math.abs(r)))));
  return formatNumber(r, decimals).replace(/(\.\d*?)0+$/, '$1').replace(/\.$/, '');
}

function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string);
}
