/**
 * ECharts option of the drowning-threshold sweep: the crest's final water
 * depth (m, down) against the swept parameter, the points that drowned in
 * coral, the drowning depth (G = 1 % of Gm) as a horizontal line and the
 * threshold found by bisection as a vertical one.
 */
import type { ThresholdResult } from '../../../shared/forward-model/index';
import { palette } from '../../theme';

export const PARAMETER_LABEL = { productionFactor: 'Production factor (all cycles)', riseRate: 'Rise rate (m/Myr)' } as const;

export function sweepOption(t: ThresholdResult) {
  const pts = [...t.points].sort((a, b) => a.value - b.value);
  const mark: { xAxis?: number; yAxis?: number; name: string; lineStyle: Record<string, unknown>; label: Record<string, unknown> }[] = [
    { yAxis: t.drowningDepthM, name: 'Drowning depth', lineStyle: { color: palette.coral, type: 'dashed' }, label: { formatter: `drowning depth ${t.drowningDepthM.toFixed(1)} m`, position: 'insideEndTop', color: palette.coral } },
  ];
  if (t.value !== null)
    mark.push({ xAxis: t.value, name: 'Threshold', lineStyle: { color: palette.ink, type: 'solid', width: 1.5 }, label: { formatter: `threshold ${t.value.toPrecision(3)}`, position: 'insideStartBottom', color: palette.ink } });
  return {
    animation: false,
    grid: { left: 52, right: 18, top: 30, bottom: 40 },
    tooltip: { trigger: 'item' },
    xAxis: { type: 'value', name: PARAMETER_LABEL[t.parameter], nameLocation: 'middle', nameGap: 26, scale: true },
    yAxis: { type: 'value', name: 'Final crest water depth (m)', inverse: true, nameLocation: 'start', nameTextStyle: { align: 'left' } },
    series: [
      {
        type: 'line',
        name: 'Final crest water depth',
        data: pts.map((p) => [p.value, p.crestWaterDepthM]),
        showSymbol: true,
        symbolSize: 6,
        lineStyle: { color: palette.lagoon, width: 1.5 },
        itemStyle: { color: (p: { dataIndex: number }) => (pts[p.dataIndex]?.drowned ? palette.coral : palette.lagoon) },
        markLine: { symbol: 'none', silent: true, data: mark },
      },
    ],
  };
}
