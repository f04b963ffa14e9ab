import { describe, expect, it } from 'vitest';
import { toInterpretationInput, type MeasureContext } from '../../../shared/editor/model';
import { measure } from '../../../shared/measure/index';
import { cycleColour } from '../../../client/canvas/palette';
import { flankAngleData, flankAngleOption, marginTrajectoryData, marginTrajectoryOption, topWidthOption } from '../../../client/components/readings/plots';
import { kestrel } from '../canvas/fixtures';

const ctx: MeasureContext = {
  calibrationTies: [
    { px: [0, 0], world: [0, 0] },
    { px: [1000, 0], world: [10000, 0] },
    { px: [0, 1000], world: [0, 1000] },
  ],
  verticalDomain: 'depth_m',
  velocity: { kind: 'constant', v: 2000 },
};

// pixels → x = 10·u m, z = v m (depth section): margins of Kestrel Knoll's two complete cycles
const b = measure(toInterpretationInput(kestrel(), ctx)).buildups[0];

describe('Readings plots', () => {
  it('margin trajectory: one point per margin in depth, coloured oldest first, depth axis pointing down', () => {
    const d = marginTrajectoryData(b);
    const near = (got: number[][], want: number[][]) => got.forEach((p, i) => p.forEach((v, j) => expect(v).toBeCloseTo(want[i][j], 6)));
    near(d.left.map((p) => p.value), [[2200, 680], [3000, 590]]);
    near(d.right.map((p) => p.value), [[7800, 682], [7000, 592]]);
    expect(d.left).toHaveLength(2);
    expect(d.left.map((p) => p.itemStyle.color)).toEqual([cycleColour(0), cycleColour(1)]);
    const o = marginTrajectoryOption(b);
    expect(o.yAxis.inverse).toBe(true);
    // one dashed top segment per cycle plus the left and right margin lines
    expect(o.series).toHaveLength(4);
  });

  it('top width per cycle: bars in cycle colours', () => {
    const o = topWidthOption(b);
    expect(o.xAxis.data).toEqual(['1', '2']);
    const w = o.series[0].data.map((p) => p.value);
    expect(w).toHaveLength(2);
    expect(w[0]).toBeCloseTo(5600, 6);
    expect(w[1]).toBeCloseTo(4000, 6);
    expect(o.series[0].data[1].itemStyle.color).toBe(cycleColour(1));
  });

  it('flank angle per cycle: left and right with gaps where no flank was traced', () => {
    const d = flankAngleData(b);
    // cycle 1 left flank from (150, 700) to (120, 790): atan(90 / 300) in metres
    expect(d.left[0]).toBeCloseTo((Math.atan(90 / 300) * 180) / Math.PI, 9);
    expect(d.left[1]).toBeNull();
    expect(d.right[0]).toBeNull();
    expect(d.right[1]).toBeCloseTo((Math.atan(80 / 500) * 180) / Math.PI, 9);
    expect(flankAngleOption(b).series.map((s) => s.name)).toEqual(['Left', 'Right']);
  });
});
