/**
 * ECharts options of the plots of one buildup's measurements, used by the
 * Readings panel, the report page and the server's PDF (ECharts server-side
 * SVG rendering), so the page and the paper never disagree. Pure functions,
 * testable without a browser. Lengths are shown in the reader's unit (`unit`,
 * metres or international feet, shared/units.ts); angles in degrees:
 * - margin trajectory: margin positions x against depth z for each cycle,
 *   left and right margins joined oldest to youngest, depth increasing downward;
 * - top width per cycle;
 * - flank angle per cycle, left and right;
 * - thickness per cycle;
 * - trajectory angle per cycle against the class bands (contract §5).
 * Cycle colours from palette.ts (oldest first).
 */
import type { BuildupMeasurement } from '../measure/index';
import { cycleColour, HOUSE_PALETTE as palette } from '../palette';
import { formatDegrees, formatNumber } from '../format';
import { DEFAULT_LENGTH_UNIT, toDisplayLength, type LengthUnit } from '../units';

const AXIS = {
  axisLine: { lineStyle: { color: '#9aa6b0' } },
  // labels that would overlap another are left out (a narrow plot in the PDF, a narrow panel on the page)
  axisLabel: { color: palette.inkMuted, fontSize: 10, hideOverlap: true, formatter: (v: number | string) => (typeof v === 'number' ? formatNumber(v, Number.isInteger(v) ? 0 : 1) : v) },
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
export function marginTrajectoryData(
  b: BuildupMeasurement,
  unit: LengthUnit = DEFAULT_LENGTH_UNIT,
): { left: Pt[]; right: Pt[]; tops: { cycle: number; colour: string; line: [number, number][] }[] } {
  const d = (p: readonly number[]): [number, number] => [toDisplayLength(p[0], unit), toDisplayLength(p[1], unit)];
  const left = b.cycles.map((c, i): Pt => ({ value: d(c.marginLeft), itemStyle: { color: cycleColour(i) }, cycle: c.index, side: 'left' }));
  const right = b.cycles.map((c, i): Pt => ({ value: d(c.marginRight), itemStyle: { color: cycleColour(i) }, cycle: c.index, side: 'right' }));
  const tops = b.cycles.map((c, i) => ({
    cycle: c.index,
    colour: cycleColour(i),
    line: [d(c.marginLeft), d(c.marginRight)],
  }));
  return { left, right, tops };
}

/** A length already in the display unit, with the unit: 1 decimal below 1 000, whole above. */
const formatLength = (v: number | null | undefined, unit: LengthUnit) =>
  typeof v === 'number' && Number.isFinite(v) ? `${formatNumber(v, Math.abs(v) < 1000 ? 1 : 0)} ${unit}` : '—';

const marginTip = (unit: LengthUnit) => (p: { data?: unknown }) => {
  const d = p.data as Pt | undefined;
  if (!d || !('cycle' in d)) return '';
  return `Cycle ${d.cycle}, ${d.side} margin<br/>x ${formatLength(d.value[0], unit)}, depth ${formatLength(d.value[1], unit)}`;
};

export function marginTrajectoryOption(b: BuildupMeasurement, unit: LengthUnit = DEFAULT_LENGTH_UNIT) {
  const { left, right, tops } = marginTrajectoryData(b, unit);
  const lineStyle = { color: palette.inkMuted, width: 1.5 };
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Margin trajectory', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: { trigger: 'item', formatter: marginTip(unit) },
    grid: GRID,
    xAxis: { type: 'value', name: `x (${unit})`, nameLocation: 'middle', nameGap: 20, scale: true, splitNumber: 4, ...AXIS },
    yAxis: { type: 'value', name: `depth (${unit})`, nameLocation: 'middle', nameGap: 40, inverse: true, scale: true, ...AXIS },
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

export function topWidthOption(b: BuildupMeasurement, unit: LengthUnit = DEFAULT_LENGTH_UNIT) {
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Top width per cycle', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: {
      trigger: 'item',
      formatter: (p: { name?: string; value?: unknown }) => `Cycle ${p.name}: ${formatLength(p.value as number, unit)}`,
    },
    grid: GRID,
    xAxis: { type: 'category', name: 'cycle', nameLocation: 'middle', nameGap: 20, data: b.cycles.map((c) => String(c.index)), ...AXIS },
    yAxis: { type: 'value', name: `width (${unit})`, nameLocation: 'middle', nameGap: 40, ...AXIS },
    series: [
      {
        type: 'bar',
        name: 'Top width',
        barMaxWidth: 22,
        data: b.cycles.map((c, i) => ({ value: toDisplayLength(c.topWidthM, unit), itemStyle: { color: cycleColour(i), borderColor: 'rgba(0,0,0,0.25)', borderWidth: 0.5 } })),
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

export function thicknessOption(b: BuildupMeasurement, unit: LengthUnit = DEFAULT_LENGTH_UNIT) {
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Thickness per cycle', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: {
      trigger: 'item',
      formatter: (p: { name?: string; value?: unknown }) => `Cycle ${p.name}: ${formatLength(p.value as number, unit)}`,
    },
    grid: GRID,
    xAxis: { type: 'category', name: 'cycle', nameLocation: 'middle', nameGap: 20, data: b.cycles.map((c) => String(c.index)), ...AXIS },
    yAxis: { type: 'value', name: `thickness (${unit})`, nameLocation: 'middle', nameGap: 40, ...AXIS },
    series: [
      {
        type: 'bar',
        name: 'Thickness',
        barMaxWidth: 22,
        data: b.cycles.map((c, i) => ({ value: toDisplayLength(c.thicknessM, unit), itemStyle: { color: cycleColour(i), borderColor: 'rgba(0,0,0,0.25)', borderWidth: 0.5 } })),
      },
    ],
  };
}

/** Class bands of a cycle's trajectory angle (contract §5) for a tolerance in degrees. */
export function trajectoryBands(toleranceDeg: number): { name: string; from: number; to: number; colour: string }[] {
  return [
    { name: 'prograding', from: -10, to: 90 - toleranceDeg, colour: 'rgba(233,196,106,0.22)' },
    { name: 'aggrading', from: 90 - toleranceDeg, to: 90 + toleranceDeg, colour: 'rgba(42,157,143,0.18)' },
    { name: 'backstepping', from: 90 + toleranceDeg, to: 190, colour: 'rgba(0,114,178,0.14)' },
  ];
}

/** Trajectory angle per cycle (from cycle 2; cycle 1 has no older margin) over the prograding / aggrading / backstepping bands. */
export function trajectoryAngleOption(b: BuildupMeasurement, toleranceDeg = 10) {
  const bands = trajectoryBands(toleranceDeg);
  const values = b.cycles.map((c) => c.trajectoryDeg);
  const finite = values.filter((v): v is number => typeof v === 'number');
  const lo = Math.min(0, ...finite.map((v) => Math.floor(v / 30) * 30));
  const hi = Math.max(180, ...finite.map((v) => Math.ceil(v / 30) * 30));
  return {
    textStyle: TEXT,
    animation: false,
    title: { text: 'Trajectory angle per cycle', left: 0, top: 0, textStyle: TITLE_STYLE },
    tooltip: {
      trigger: 'item',
      formatter: (p: { name?: string; value?: unknown }) => `Cycle ${p.name}: ${formatDegrees(p.value as number)}`,
    },
    // the band names stand right of the plot area, where no point can cover them
    grid: { ...GRID, right: 76 },
    xAxis: { type: 'category', name: 'cycle', nameLocation: 'middle', nameGap: 20, data: b.cycles.map((c) => String(c.index)), ...AXIS },
    yAxis: { type: 'value', name: 'angle (°)', nameLocation: 'middle', nameGap: 34, min: lo, max: hi, interval: 30, ...AXIS },
    series: [
      {
        type: 'line',
        name: 'Trajectory',
        data: values.map((v, i) => ({ value: v, itemStyle: { color: cycleColour(i), borderColor: '#33414c', borderWidth: 0.8 } })),
        connectNulls: false,
        symbol: 'circle',
        symbolSize: 8,
        lineStyle: { color: palette.ink, width: 1.5 },
        markArea: {
          silent: true,
          label: { show: true, position: 'right', distance: 6, fontSize: 9, color: palette.inkMuted },
          data: bands.map((band) => [
            { yAxis: Math.max(lo, band.from), name: band.name, itemStyle: { color: band.colour } },
            { yAxis: Math.min(hi, band.to) },
          ]),
        },
      },
    ],
  };
}

/** Which plots a buildup has data for, with their options (the report page and the PDF show the same list). */
export function reportPlots(b: BuildupMeasurement, unit: LengthUnit = DEFAULT_LENGTH_UNIT, toleranceDeg = 10): { key: string; option: Record<string, unknown> }[] {
  const out: { key: string; option: Record<string, unknown> }[] = [
    { key: 'trajectory', option: marginTrajectoryOption(b, unit) },
    { key: 'width', option: topWidthOption(b, unit) },
    { key: 'thickness', option: thicknessOption(b, unit) },
  ];
  if (b.cycles.some((c) => c.left.flankAngleDeg != null || c.right.flankAngleDeg != null)) out.push({ key: 'flank', option: flankAngleOption(b) });
  if (b.cycles.some((c) => c.trajectoryDeg != null)) out.push({ key: 'trajectory-angle', option: trajectoryAngleOption(b, toleranceDeg) });
  return out;
}
