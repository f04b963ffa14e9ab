import { readFileSync } from 'node:fs';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import {
  DEMO_SECTIONS,
  generateSection,
  sectionGeometry,
  type DemoSectionDef,
} from '../../../server/synth/demo';
import {
  EarthModel,
  renderModel,
  validateModelDef,
  type BuildupGeometry,
  type EarthModelDef,
  type Interpretation,
  type Pt,
} from '../../../server/synth/model';

const fixture = (key: string) =>
  JSON.parse(readFileSync(new URL(`../../fixtures/synthetic/${key}.json`, import.meta.url), 'utf8'));
const plain = <T>(v: T): T => JSON.parse(JSON.stringify(v));
const byLine = (line: string) => DEMO_SECTIONS.find((d) => d.lineName === line)!;
const clone = <T>(v: T): T => structuredClone(v);

/** linear interpolation of a polyline in x, nearest end value outside (spec §5 rule) */
function interp(pl: Pt[], x: number): number {
  if (x <= pl[0][0]) return pl[0][1];
  for (let i = 1; i < pl.length; i++) {
    if (x <= pl[i][0]) {
      const [x0, y0] = pl[i - 1];
      const [x1, y1] = pl[i];
      return x1 === x0 ? y1 : y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
    }
  }
  return pl[pl.length - 1][1];
}
const spans = (pl: Pt[], x: number) => x >= pl[0][0] && x <= pl[pl.length - 1][0];
const youngestTop = (b: BuildupGeometry) => b.cycles[b.cycles.length - 1];
function crestOf(b: BuildupGeometry): Pt {
  return youngestTop(b).top.reduce((best, p) => (p[1] < best[1] ? p : best));
}

describe('demo section metadata', () => {
  it('holds the two invented Tessel Basin lines', () => {
    expect(DEMO_SECTIONS.map((d) => [d.lineName, d.model.buildup.name, d.survey])).toEqual([
      ['TB-11', 'Kestrel Knoll', 'TB-2024'],
      ['TB-14', 'Marrow Bank', 'TB-2024'],
    ]);
    for (const d of DEMO_SECTIONS) {
      expect(d.verticalDomain).toBe('twt_ms');
      expect(d.width).toBeGreaterThanOrEqual(8000);
      expect(d.height).toBeGreaterThanOrEqual(2500);
      for (const p of [d.lineStart, d.lineEnd]) {
        expect(Math.abs(p.lat)).toBeLessThanOrEqual(90);
        expect(Math.abs(p.lon)).toBeLessThanOrEqual(180);
      }
    }
  });
});

describe.each(DEMO_SECTIONS.map((d) => [d.lineName, d] as const))('true geometry of %s', (_line, def) => {
  const g = sectionGeometry(def);
  const fx = fixture(def.key);

  it('is exactly the committed fixture', () => {
    expect(g.width).toBe(fx.width);
    expect(g.height).toBe(fx.height);
    expect(plain(g.ties)).toEqual(fx.ties);
    expect(plain(g.interpretation)).toEqual(fx.interpretation);
    expect(plain(g.pixelGeometry)).toEqual(fx.pixelGeometry);
    expect(plain(g.depthGeometry)).toEqual(fx.depthGeometry);
  });

  it('has the shape of a spec §4 interpretation', () => {
    const it: Interpretation = g.interpretation;
    expect(it.format).toBe('cayline.interpretation/1');
    expect(it.verticalDomain).toBe('twt_ms');
    expect(it.coordinates).toBe('world');
    expect(it.velocity.kind).toBe('buildup');
    const b = it.buildups[0];
    expect(b.name).toBe(def.model.buildup.name);
    expect(b.base.length).toBeGreaterThanOrEqual(2);
    b.cycles.forEach((c, i) => {
      expect(c.index).toBe(i + 1);
      for (const pl of [c.top, c.flankLeft, c.flankRight]) {
        expect(pl.length).toBeGreaterThanOrEqual(2);
        for (let k = 1; k < pl.length; k++) expect(pl[k][0]).toBeGreaterThan(pl[k - 1][0]);
      }
      expect(spans(c.top, c.marginLeft[0]) && spans(c.top, c.marginRight[0])).toBe(true);
      expect(c.flankLeft[c.flankLeft.length - 1]).toEqual(c.marginLeft);
      expect(c.flankRight[0]).toEqual(c.marginRight);
    });
    for (const t of b.terminations) expect(['onlap', 'downlap', 'toplap', 'truncation']).toContain(t.type);
  });

  it('pixel geometry is the world geometry through the ties', () => {
    const [a, b] = [g.ties[0], g.ties[3]];
    const sx = (b.world[0] - a.world[0]) / (b.px[0] - a.px[0]);
    const sy = (b.world[1] - a.world[1]) / (b.px[1] - a.px[1]);
    const ox = a.world[0] - sx * a.px[0];
    const oy = a.world[1] - sy * a.px[1];
    const w = g.interpretation.buildups[0];
    const p = g.pixelGeometry.buildups[0];
    expect(g.pixelGeometry.calibration).toEqual(g.ties);
    const pairs: [Pt, Pt][] = [
      ...w.base.map((q, i) => [q, p.base[i]] as [Pt, Pt]),
      ...w.cycles.flatMap((c, ci) => c.top.map((q, i) => [q, p.cycles[ci].top[i]] as [Pt, Pt])),
      ...w.terminations.map((t, i) => [t.at, p.terminations[i].at] as [Pt, Pt]),
    ];
    for (const [q, px] of pairs) {
      expect(ox + sx * px[0]).toBeCloseTo(q[0], 1);
      expect(oy + sy * px[1]).toBeCloseTo(q[1], 1);
    }
  });

  it('TWT geometry converts back to the depth model with the spec §3 "buildup" velocity rule', () => {
    // Spec §3: vertical ray; water to seafloorMs, overburden down to the envelope (smallest TWT among
    // the tops and flanks at that x), carbonate below it.
    const v = g.interpretation.velocity;
    const b = g.interpretation.buildups[0];
    const d = g.depthGeometry.buildups[0];
    const lines = b.cycles.flatMap((c) => [c.top, c.flankLeft, c.flankRight]);
    const toDepth = ([x, t]: Pt): number => {
      let env = Infinity;
      for (const pl of lines) if (spans(pl, x)) env = Math.min(env, interp(pl, x));
      const tsf = v.water.seafloorMs;
      let z = (v.water.v * Math.min(t, tsf)) / 2000;
      if (t > tsf) z += (v.overburden.v * (Math.min(t, env) - tsf)) / 2000;
      if (t > env) z += (v.carbonate.v * (t - env)) / 2000;
      return z;
    };
    const check = (tw: Pt[], dp: Pt[]) =>
      tw.forEach((p, i) => {
        expect(p[0]).toBe(dp[i][0]);
        expect(Math.abs(toDepth(p) - dp[i][1])).toBeLessThan(1);
      });
    check(b.base, d.base);
    b.cycles.forEach((c, i) => {
      check(c.top, d.cycles[i].top);
      check([c.marginLeft, c.marginRight], [d.cycles[i].marginLeft, d.cycles[i].marginRight]);
    });
  });
});

describe('demo scenario geometry', () => {
  const kes = sectionGeometry(byLine('TB-11'));
  const mar = sectionGeometry(byLine('TB-14'));

  it('Kestrel Knoll backsteps and drowns under onlapping reflectors', () => {
    const b = kes.depthGeometry.buildups[0];
    expect(b.cycles.length).toBeGreaterThanOrEqual(3);
    expect(b.cycles.length).toBeLessThanOrEqual(4);
    for (let i = 1; i < b.cycles.length; i++) {
      const [p, c] = [b.cycles[i - 1], b.cycles[i]];
      expect(c.marginLeft[0] - p.marginLeft[0]).toBeGreaterThan(100); // left margin stepped in
      expect(p.marginRight[0] - c.marginRight[0]).toBeGreaterThan(100); // right margin stepped in
      expect(p.marginLeft[1] - c.marginLeft[1]).toBeGreaterThan(50); // and rose
    }
    const tw = kes.interpretation.buildups[0];
    expect(tw.topIsDrowningSurface).toBe(true);
    const y = youngestTop(tw);
    const onTop = tw.terminations.filter(
      (t) => (t.type === 'onlap' || t.type === 'downlap') && t.at[0] >= y.marginLeft[0] && t.at[0] <= y.marginRight[0],
    );
    expect(onTop.length).toBeGreaterThanOrEqual(2); // spec §6 drownedMinTerminations default
    // each termination lies on the youngest top or an older cycle's flank, i.e. on the envelope
    const lines = tw.cycles.flatMap((c) => [c.top]);
    for (const t of tw.terminations) {
      const env = Math.min(...lines.filter((pl) => spans(pl, t.at[0])).map((pl) => interp(pl, t.at[0])));
      expect(Math.abs(env - t.at[1])).toBeLessThan(1);
    }
  });

  it('Marrow Bank aggrades: margin shifts within ±10° of vertical, no onlap on its top', () => {
    const b = mar.depthGeometry.buildups[0];
    expect(b.cycles.length).toBe(3);
    for (let i = 1; i < b.cycles.length; i++) {
      const [p, c] = [b.cycles[i - 1], b.cycles[i]];
      const back = (c.marginLeft[0] - p.marginLeft[0] + (p.marginRight[0] - c.marginRight[0])) / 2;
      const aggr = (p.marginLeft[1] - c.marginLeft[1] + (p.marginRight[1] - c.marginRight[1])) / 2;
      const traj = (Math.atan2(aggr, -back) * 180) / Math.PI; // spec §5 trajectory
      expect(Math.abs(traj - 90)).toBeLessThan(10); // spec §5 aggradingToleranceDeg default
    }
    const tw = mar.interpretation.buildups[0];
    expect(tw.topIsDrowningSurface).toBe(false);
    const y = youngestTop(tw);
    const onTop = tw.terminations.filter((t) => t.at[0] >= y.marginLeft[0] && t.at[0] <= y.marginRight[0]);
    expect(onTop.length).toBeLessThan(2);
    expect(tw.terminations.length).toBeGreaterThan(0); // basin fill still onlaps the flanks
  });

  it('the base is pulled up in time under the fast carbonate', () => {
    for (const g of [kes, mar]) {
      const tw = g.interpretation.buildups[0];
      const dp = g.depthGeometry.buildups[0];
      const vo = g.interpretation.velocity.overburden.v;
      const xc = crestOf(tw)[0];
      const toe = tw.base[0][0];
      // time relief of the base between toe and crest, minus what its depth relief would give in
      // the slower overburden: the pull-up, here more than 100 ms
      const dtSeen = interp(tw.base, toe) - interp(tw.base, xc);
      const dtDepth = (2000 * (interp(dp.base, toe) - interp(dp.base, xc))) / vo;
      expect(dtSeen - dtDepth).toBeGreaterThan(100);
    }
  });
});

describe('rendered image', () => {
  const def = byLine('TB-11');

  it('has the requested size, one grey channel, a mean near mid-grey, and is deterministic for a seed', async () => {
    const a = await generateSection(def, { width: 400, height: 625 });
    expect([a.width, a.height]).toEqual([400, 625]);
    const meta = await sharp(a.png).metadata();
    expect([meta.width, meta.height, meta.channels, meta.format]).toEqual([400, 625, 1, 'png']);
    const raw = await sharp(a.png).toColourspace('b-w').raw().toBuffer();
    expect(raw.length).toBe(400 * 625);
    let sum = 0;
    for (const g of raw) sum += g;
    expect(Math.abs(sum / raw.length - 128)).toBeLessThan(4);
    const b = await generateSection(def, { width: 400, height: 625 });
    expect(b.png.equals(a.png)).toBe(true);
    const c = await generateSection(def, { width: 400, height: 625, seed: 'another seed' });
    expect(c.png.equals(a.png)).toBe(false);
  });

  it('places reflections at the TWT of the model interfaces', async () => {
    const width = 160;
    const height = 2500; // 1 ms per row
    const quiet: DemoSectionDef = clone(def);
    quiet.model.buildup.lensesPerKm = 0;
    const model = new EarthModel(quiet.model, quiet.seed);
    const img = renderModel(model, { width, height, seed: quiet.seed, noise: 0, keepAmplitude: true });
    const amp = img.amplitude!;
    const dx = (quiet.model.xRangeM[1] - quiet.model.xRangeM[0]) / width;
    const colOf = (x: number) => Math.floor(x / dx);
    const xOf = (u: number) => (u + 0.5) * dx;
    const rowOf = (t: number) => t - 0.5; // row v is the sample at t = v + 0.5 ms
    const extremum = (u: number, t: number, sign: 1 | -1, win = 12) => {
      let best = -Infinity;
      let at = -1;
      for (let v = Math.round(rowOf(t)) - win; v <= Math.round(rowOf(t)) + win; v++) {
        const a = sign * amp[v * width + u];
        if (a > best) [best, at] = [a, v];
      }
      return { row: at, value: sign * best };
    };
    const tw = sectionGeometry(quiet).interpretation.buildups[0];
    // seafloor, away from the buildup: a peak at seafloorMs
    const sf = extremum(colOf(1000), 600, 1);
    expect(Math.abs(sf.row - rowOf(600))).toBeLessThanOrEqual(1);
    // the buildup's top above the crest: a strong peak at the traced TWT
    const uc = colOf(crestOf(tw)[0]);
    const tTop = interp(youngestTop(tw).top, xOf(uc));
    const top = extremum(uc, tTop, 1);
    expect(Math.abs(top.row - rowOf(tTop))).toBeLessThanOrEqual(1.5);
    expect(top.value).toBeGreaterThan(0.2);
    // the base under the crest (carbonate over slower rock): a trough at the pulled-up TWT
    const tBase = interp(tw.base, xOf(uc));
    const base = extremum(uc, tBase, -1);
    expect(Math.abs(base.row - rowOf(tBase))).toBeLessThanOrEqual(1.5);
    expect(base.value).toBeLessThan(-0.2);
    // older cycle tops under the crest show where traced, with the sign of their impedance step
    const cs = quiet.model.buildup.cycles;
    for (let i = 0; i < cs.length - 1; i++) {
      const sign = cs[i].density > cs[i + 1].density ? 1 : -1; // denser below → positive reflection
      const t = interp(tw.cycles[i].top, xOf(uc));
      const e = extremum(uc, t, sign, 8);
      expect(Math.abs(e.row - rowOf(t))).toBeLessThanOrEqual(1.5);
      expect(Math.abs(e.value)).toBeGreaterThan(0.03);
    }
    // the same section as a picture: positive amplitude is dark
    const pic = await generateSection(quiet, { width, height });
    const raw = await sharp(pic.png).toColourspace('b-w').raw().toBuffer();
    expect(raw[top.row * width + uc]).toBeLessThan(40);
    expect(raw[base.row * width + uc]).toBeGreaterThan(215);
  });
});

describe('bad input', () => {
  const def = byLine('TB-14');
  const broken = (edit: (m: EarthModelDef) => void) => {
    const m = clone(def.model);
    edit(m);
    return m;
  };
  it('names the field path', () => {
    expect(() => validateModelDef(broken((m) => (m.velocities.carbonate = Number.NaN)))).toThrow(
      /model\.velocities\.carbonate: must be a finite number/,
    );
    expect(() => validateModelDef(broken((m) => (m.buildup.cycles[1].marginRightX = 100)))).toThrow(
      /model\.buildup\.cycles\[1\]\.marginRightX/,
    );
    expect(() => new EarthModel(broken((m) => (m.buildup.cycles[2].marginLeftDepthM = 2500)))).toThrow(
      /model\.buildup\.cycles\[2\]\.marginLeftDepthM: the top must lie above the older surface/,
    );
    expect(() => validateModelDef(broken((m) => (m.buildup.cycles = [])))).toThrow(/model\.buildup\.cycles/);
    expect(() => sectionGeometry(def, { width: 3 })).toThrow(/options\.width/);
  });
});
