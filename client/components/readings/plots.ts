/**
 * ECharts options of the three Readings plots, built from one buildup's
 * measurements (pure functions, so they can be tested without a browser):
 * - margin trajectory: margin positions x against depth z for each cycle,
 *   left and right margins joined oldest to youngest, depth increasing downward;
 * - top width per cycle;
 * - flank angle per cycle, left and right.
 * Cycle colours from palette.ts (oldest first).
 */
import type { BuildupMeasurement } from '../../../shared/measure/index';
import { cycleColour } from '../../canvas/palette';
import { palette } from '../../theme';
import { formatDegrees, formatMetres, formatNumber } from './format';

const AXIS = {
  axisLine: { lineStyle: { color: '#9aa6b0' } },
  axisLabel: { color: palette.inkMuted, fontSize: 10, formatter: (v: number | string) => (typeof v === 'number' ? formatNumber(v, Number.isInteger(v) ? 0 : 1) : v) },
  splitLine: { lineStyle: { color: palette.line } },
  nameTextStyle: { color: palette.inkMuted, fontSize: 10 },
};
const GRID = { left: 52, right: 12, top: 26, bottom: 30, containLabel: false };
const TITLE_STYLE = { fontSize: 12, fontWeight: 600 as const, color: palette.ink };
const TEXT = { fontFamily: "'IBM Plex Sans', system-ui, sans-serif" };

interface Pt {
  value: [number, number];
  itemStyle: { color: string };
  cycle: number;
  side: 'left' | 'right';
}

/** Data of the margin trajectory: one point per margin, coloured by cycle. */
export function marginTrajectoryData(b: BuildupMeasurement): { left: Pt[]; right: Pt[]; tops: { cycle: number; colour: string; line: [number, number][] }[] } {
  const left = b.cycles.map((c, i): Pt => ({ value: [c.marginLeft[0], c.marginLeft[1]], itemStyle: { color: cycleColour(i) }, cycle: c.index, side: 'left' }));
  const right = b.cycles.map((c, i): Pt => ({ value: [c.marginRight[0], c.marginRight[1]], itemStyle: { color: cycleColour(i) }, cycle: c.index, side: 'right' }));
  const tops = b.cycles.map((c, i) => ({
    cycle: c.index,
    colour: cycleColour(i),
    line: [
      [c.marginLeft[0], c.marginLeft[1]],
      [c.marginRight[0], c.marginRight[1]],
    ] as [number, number][],
  }));
  return { left, right, tops };
}

const marginTip = (p: { data?: unknown }) => {
  const d = p.data as Pt | undefined;
  if (!d || !('cycle' in d)) return '';
  return `Cycle ${d.cycle}, ${d.side} margin<br/>x ${formatMetres(d.value[0])}, depth ${formatMetres(d.value[1])}`;
};

export function marginTrajectoryOption(b: BuildupMeasurement) {
  const { left, right, tops } = marginTrajectoryData(b);
  const lineStyle = { color: palette.inkMuted, width: 1.5 };
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Margin trajectory', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: { trigger: 'item', formatter: marginTip },
    grid: GRID,
    xAxis: { type: 'value', name: 'x (m)', nameLocation: 'middle', nameGap: 20, scale: true, splitNumber: 4, ...AXIS },
    yAxis: { type: 'value', name: 'depth (m)', nameLocation: 'middle', nameGap: 40, inverse: true, scale: true, ...AXIS },
    series: [
      ...tops.map((t) => ({
        type: 'line',
        name: `Cycle ${t.cycle} top`,
        data: t.line,
        symbol: 'none',
        silent: true,
        lineStyle: { color: t.colour, width: 1, type: 'dashed', opacity: 0.7 },
        z: 1,
      })),
      { type: 'line', name: 'Left margins', data: left, symbol: 'circle', symbolSize: 8, lineStyle, z: 3 },
      { type: 'line', name: 'Right margins', data: right, symbol: 'triangle', symbolSize: 9, lineStyle: { ...lineStyle, type: 'dashed' }, z: 3 },
    ],
  };
}

export function topWidthOption(b: BuildupMeasurement) {
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Top width per cycle', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: {
      trigger: 'item',
      formatter: (p: { name?: string; value?: unknown }) => `Cycle ${p.name}: ${formatMetres(p.value as number)}`,
    },
    grid: GRID,
    xAxis: { type: 'category', name: 'cycle', nameLocation: 'middle', nameGap: 20, data: b.cycles.map((c) => String(c.index)), ...AXIS },
    yAxis: { type: 'value', name: 'width (m)', nameLocation: 'middle', nameGap: 40, ...AXIS },
    series: [
      {
        type: 'bar',
        name: 'Top width',
        barMaxWidth: 22,
        data: b.cycles.map((c, i) => ({ value: c.topWidthM, itemStyle: { color: cycleColour(i), borderColor: 'rgba(0,0,0,0.25)', borderWidth: 0.5 } })),
      },
    ],
  };
}

/** Left and right flank angles per cycle (null where no flank was traced). */
export function flankAngleData(b: BuildupMeasurement): { left: (number | null)[]; right: (number | null)[] } {
  return {
    left: b.cycles.map((c) => c.left.flankAngleDeg),
    right: b.cycles.map((c) => c.right.flankAngleDeg),
  };
}

export function flankAngleOption(b: BuildupMeasurement) {
  const { left, right } = flankAngleData(b);
  const pts = (v: (number | null)[]) => v.map((a, i) => ({ value: a, itemStyle: { color: cycleColour(i), borderColor: '#33414c', borderWidth: 0.8 } }));
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Flank angle per cycle', left: 0, top: 0, textStyle: TITLE_STYLE },
    legend: { right: 0, top: 0, itemWidth: 16, itemHeight: 8, textStyle: { fontSize: 10, color: palette.inkMuted }, data: ['Left', 'Right'] },
    tooltip: {
      trigger: 'item',
      formatter: (p: { seriesName?: string; name?: string; value?: unknown }) => `Cycle ${p.name}, ${String(p.seriesName).toLowerCase()} flank: ${formatDegrees(p.value as number)}`,
    },
    grid: GRID,
    xAxis: { type: 'category', name: 'cycle', nameLocation: 'middle', nameGap: 20, data: b.cycles.map((c) => String(c.index)), ...AXIS },
    yAxis: { type: 'value', name: 'angle (°)', nameLocation: 'middle', nameGap: 34, min: 0, ...AXIS },
    series: [
      { type: 'line', name: 'Left', data: pts(left), connectNulls: false, symbol: 'circle', symbolSize: 8, lineStyle: { color: palette.ink, width: 1.5 }, itemStyle: { color: palette.ink } },
      { type: 'line', name: 'Right', data: pts(right), connectNulls: false, symbol: 'triangle', symbolSize: 9, lineStyle: { color: palette.ink, width: 1.5, type: 'dashed' }, itemStyle: { color: palette.ink } },
    ],
  };
}
