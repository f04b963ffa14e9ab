import { describe, expect, it } from 'vitest';
import type { AnalogueSummary } from '../../../shared/schemas/analogues';
import { crossplotOption, fmt, histogramOption } from '../../../client/components/library/plots';

function row(id: number, cls: AnalogueSummary['class'], heightM: number | null, areaM2: number | null): AnalogueSummary {
  return {
    id,
    name: `TB analogue ${id}`,
    status: 'accepted',
    source: 'hand',
    setting: null,
    factory: null,
    climate: null,
    class: cls,
    period: null,
    epoch: null,
    stage: null,
    ageMa: null,
    latitude: null,
    longitude: null,
    tags: [],
    metrics: { heightM, areaM2 },
    citationShort: null,
    updatedAt: '2026-01-01T00:00:00Z',
  };
}

describe('library crossplot', () => {
  const items = [row(1, 'aggrading', 100, 1e4), row(2, 'drowned', 300, 5e6), row(3, null, 200, 2e5), row(4, 'aggrading', null, 3e3)];

  it('groups points by the tag, leaves rows without both metrics out and counts them', () => {
    const r = crossplotOption({ items, x: 'areaM2', y: 'heightM', colourBy: 'class' });
    const series = r.option.series as { name: string; data: unknown[] }[];
    expect(series.map((s) => s.name)).toEqual(['aggrading', 'drowned', 'untagged']);
    expect(series[0].data).toEqual([[1e4, 100, 1, 'TB analogue 1']]);
    expect(r.plotted).toBe(3);
    expect(r.missing).toBe(1);
  });

  it('labels both axes as the tables write numbers', () => {
    const r = crossplotOption({ items, x: 'areaM2', y: 'heightM', colourBy: 'class' });
    const label = (a: unknown) => (a as { axisLabel: { formatter: (v: number) => string } }).axisLabel.formatter;
    expect(label(r.option.xAxis)(16000)).toBe('16\u2009000');
    expect(label(r.option.yAxis)(2.5e7)).toBe('2.50 × 10⁷');
  });

  it('uses a log axis only for the metric that spans more than two decades', () => {
    const r = crossplotOption({ items, x: 'areaM2', y: 'heightM', colourBy: 'class' });
    expect(r.xLog).toBe(true);
    expect(r.yLog).toBe(false);
    expect((r.option.xAxis as { type: string }).type).toBe('log');
    expect((r.option.yAxis as { type: string }).type).toBe('value');
  });

  it('adds the highlighted analogue and the outside buildup as a marked series', () => {
    const r = crossplotOption({ items, x: 'areaM2', y: 'heightM', colourBy: 'class', highlightId: 2, extra: { name: 'Marrow Bank', x: 7e4, y: 150 } });
    const last = (r.option.series as { name: string; data: unknown[] }[]).at(-1)!;
    expect(last.name).toBe('this buildup');
    expect(r.marked).toEqual(['TB analogue 2', 'Marrow Bank']);
    expect(last.data).toEqual([
      [5e6, 300, 2, 'TB analogue 2'],
      [7e4, 150, 0, 'Marrow Bank'],
    ]);
  });
});

describe('library histogram', () => {
  it('bins one metric and counts only rows that have it', () => {
    const items = [row(1, null, 100, null), row(2, null, 150, null), row(3, null, 300, null), row(4, null, null, null)];
    const r = histogramOption(items, 'heightM');
    expect(r.log).toBe(false);
    expect(r.counted).toBe(3);
  });
});

describe('fmt', () => {
  it('three significant figures, thin-space thousands, true minus, as the Readings write them', () => {
    expect(fmt(1234.5)).toBe('1\u2009230');
    expect(fmt(7890)).toBe('7\u2009890');
    expect(fmt(-31.25)).toBe('\u221231.3');
    expect(fmt(23.04)).toBe('23');
    expect(fmt(0.12345)).toBe('0.123');
    expect(fmt(0.0452)).toBe('0.045');
    expect(fmt(0)).toBe('0');
    expect(fmt(null)).toBe('—');
    expect(fmt(3.2e9)).toBe('3.20 × 10⁹');
  });
});
