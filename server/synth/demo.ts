/**
 * The two demo sections of the invented Tessel Basin (survey TB-2024) and the generator that
 * turns a section definition into a PNG plus its true geometry.
 *
 * Everything here is invented: the basin, the survey, the lines, the buildups and the line
 * end coordinates (open ocean, no named place).
 */
import sharp from 'sharp';
import {
  EarthModel,
  buildupGeometry,
  mapBuildup,
  renderModel,
  type EarthModelDef,
  type Interpretation,
  type Pt,
  type Tie,
} from './model';

export interface LonLat {
  lon: number;
  lat: number;
}

export interface DemoSectionDef {
  /** stable key, also the fixture file name */
  key: string;
  title: string;
  lineName: string;
  survey: string;
  verticalDomain: 'twt_ms';
  notes: string;
  lineStart: LonLat;
  lineEnd: LonLat;
  /** default image size (pixels) */
  width: number;
  height: number;
  /** seed of the random layer properties and the noise */
  seed: string;
  model: EarthModelDef;
}

export interface GenerateOptions {
  width?: number;
  height?: number;
  seed?: string;
  fHz?: number;
  noise?: number;
  clip?: number;
}

export interface SectionGeometry {
  width: number;
  height: number;
  ties: Tie[];
  /** spec §4 interpretation, world coordinates (x m, TWT ms) */
  interpretation: Interpretation;
  /** the same buildup in image pixels, calibrated by `ties` */
  pixelGeometry: Interpretation;
  /** the same buildup in depth (x m, z m), the model's own domain, for reference */
  depthGeometry: Interpretation;
}

export interface GeneratedSection extends SectionGeometry {
  png: Buffer;
}

const POLARITY_NOTE =
  'Polarity: an increase of acoustic impedance downward is a positive amplitude, shown dark; zero is mid-grey.';

const common = {
  xRangeM: [0, 16000] as [number, number],
  twtRangeMs: [0, 2500] as [number, number],
  densities: { water: 1.03, fill: [2.08, 2.32] as [number, number], substrate: [2.3, 2.52] as [number, number] },
};

export const DEMO_SECTIONS: DemoSectionDef[] = [
  {
    key: 'tb-11-kestrel-knoll',
    title: 'TB-11 · Kestrel Knoll',
    lineName: 'TB-11',
    survey: 'TB-2024',
    verticalDomain: 'twt_ms',
    notes:
      'Synthetic demo section (invented Tessel Basin). Kestrel Knoll: a backstepping pinnacle of four growth cycles ' +
      'that drowned; deep-water reflectors onlap its top and flanks. Made from a geometric model convolved with a ' +
      '30 Hz Ricker wavelet; velocities water 1500, overburden 2400, carbonate 4500 m/s (the base is pulled up in time ' +
      'under the buildup). ' +
      POLARITY_NOTE,
    lineStart: { lon: 63.412, lat: -27.836 },
    lineEnd: { lon: 63.57228, lat: -27.86089 },
    width: 8000,
    height: 2500,
    seed: 'TB-11',
    model: {
      ...common,
      velocities: { water: 1500, overburden: 2400, carbonate: 4500 },
      seafloorDepthM: 450,
      base: {
        depthM: 1900,
        dip: 0.012,
        undulations: [
          { ampM: 12, wavelengthM: 5200, phase: 0.7 },
          { ampM: 5, wavelengthM: 1700, phase: 2.1 },
        ],
        high: { x: 8300, widthM: 2500, heightM: 25 },
      },
      fill: { layers: 70, wobbleM: 6, drapeFraction: 0, drapeTaperM: 300 },
      substrate: { layers: 26, thicknessM: 30 },
      buildup: {
        name: 'Kestrel Knoll',
        topIsDrowningSurface: true,
        cycles: [
          {
            marginLeftX: 6300, marginRightX: 10300, marginLeftDepthM: 1805, marginRightDepthM: 1815, domeM: 10,
            flankLeftDeg: 22, flankRightDeg: 18, density: 2.4, ageTopMa: 14.8,
          },
          {
            marginLeftX: 6900, marginRightX: 9700, marginLeftDepthM: 1640, marginRightDepthM: 1650, domeM: 12,
            flankLeftDeg: 28, flankRightDeg: 23, density: 2.68, ageTopMa: 13.9,
          },
          {
            marginLeftX: 7500, marginRightX: 9150, marginLeftDepthM: 1480, marginRightDepthM: 1488, domeM: 15,
            flankLeftDeg: 33, flankRightDeg: 28, density: 2.42, ageTopMa: 12.9,
          },
          {
            marginLeftX: 8000, marginRightX: 8650, marginLeftDepthM: 1340, marginRightDepthM: 1346, domeM: 50,
            flankLeftDeg: 38, flankRightDeg: 32, density: 2.7, ageTopMa: 12.1,
          },
        ],
      },
    },
  },
  {
    key: 'tb-14-marrow-bank',
    title: 'TB-14 · Marrow Bank',
    lineName: 'TB-14',
    survey: 'TB-2024',
    verticalDomain: 'twt_ms',
    notes:
      'Synthetic demo section (invented Tessel Basin). Marrow Bank: an aggrading bank of three growth cycles whose ' +
      'margins stay nearly in place; basin fill onlaps the flanks and drapes the flat top. Made from a geometric model ' +
      'convolved with a 30 Hz Ricker wavelet; velocities water 1500, overburden 2300, carbonate 4300 m/s. ' +
      POLARITY_NOTE,
    lineStart: { lon: 63.471, lat: -27.944 },
    lineEnd: { lon: 63.56432, lat: -27.8261 },
    width: 8000,
    height: 2500,
    seed: 'TB-14',
    model: {
      ...common,
      velocities: { water: 1500, overburden: 2300, carbonate: 4300 },
      seafloorDepthM: 420,
      base: {
        depthM: 1960,
        dip: 0.006,
        undulations: [
          { ampM: 10, wavelengthM: 6100, phase: 2.4 },
          { ampM: 4, wavelengthM: 2100, phase: 0.3 },
        ],
        high: { x: 8100, widthM: 3200, heightM: 20 },
      },
      fill: { layers: 72, wobbleM: 5, drapeFraction: 0.3, drapeTaperM: 600 },
      substrate: { layers: 24, thicknessM: 30 },
      buildup: {
        name: 'Marrow Bank',
        topIsDrowningSurface: false,
        cycles: [
          {
            marginLeftX: 5200, marginRightX: 11000, marginLeftDepthM: 1880, marginRightDepthM: 1890, domeM: 6,
            flankLeftDeg: 22, flankRightDeg: 26, flankBendM: 900, density: 2.42, ageTopMa: 16.0,
          },
          {
            marginLeftX: 5185, marginRightX: 11020, marginLeftDepthM: 1735, marginRightDepthM: 1742, domeM: 6,
            flankLeftDeg: 25, flankRightDeg: 28, flankBendM: 900, density: 2.7, ageTopMa: 15.1,
          },
          {
            marginLeftX: 5200, marginRightX: 11005, marginLeftDepthM: 1590, marginRightDepthM: 1596, domeM: 8,
            flankLeftDeg: 27, flankRightDeg: 30, flankBendM: 900, density: 2.44, ageTopMa: 14.2,
          },
        ],
      },
    },
  },
];

const r3 = (v: number) => Math.round(v * 1000) / 1000;

function imageSize(def: DemoSectionDef, opts: GenerateOptions): { width: number; height: number } {
  const width = opts.width ?? def.width;
  const height = opts.height ?? def.height;
  if (!Number.isInteger(width) || width < 16) throw new Error('options.width: must be an integer of at least 16');
  if (!Number.isInteger(height) || height < 16) throw new Error('options.height: must be an integer of at least 16');
  return { width, height };
}

/** The true geometry of a section at a given image size (no rendering). */
export function sectionGeometry(def: DemoSectionDef, opts: GenerateOptions = {}): SectionGeometry {
  const { width, height } = imageSize(def, opts);
  const model = new EarthModel(def.model, opts.seed ?? def.seed);
  return geometryOf(model, def, width, height);
}

function geometryOf(model: EarthModel, def: DemoSectionDef, width: number, height: number): SectionGeometry {
  const [x0, x1] = def.model.xRangeM;
  const [t0, t1] = def.model.twtRangeMs;
  const sx = (x1 - x0) / width;
  const sy = (t1 - t0) / height;
  const toWorld = (u: number, v: number): Pt => [r3(x0 + u * sx), r3(t0 + v * sy)];
  const toPx = (p: Pt): Pt => [r3((p[0] - x0) / sx), r3((p[1] - t0) / sy)];
  const us = [Math.round(width * 0.05), Math.round(width * 0.95)];
  const vs = [Math.round(height * 0.05), Math.round(height * 0.95)];
  const ties: Tie[] = [];
  for (const v of vs) for (const u of us) ties.push({ px: [u, v], world: toWorld(u, v) });
  const g = buildupGeometry(model);
  const interpretation: Interpretation = {
    format: 'cayline.interpretation/1',
    verticalDomain: 'twt_ms',
    coordinates: 'world',
    calibration: null,
    velocity: g.velocity,
    buildups: [g.twt],
  };
  const pixelGeometry: Interpretation = {
    ...interpretation,
    coordinates: 'pixels',
    calibration: ties,
    buildups: [mapBuildup(g.twt, toPx)],
  };
  const depthGeometry: Interpretation = {
    ...interpretation,
    verticalDomain: 'depth_m',
    buildups: [g.depth],
  };
  return { width, height, ties, interpretation, pixelGeometry, depthGeometry };
}

/** Renders a section to PNG and returns it with its true geometry. */
export async function generateSection(def: DemoSectionDef, opts: GenerateOptions = {}): Promise<GeneratedSection> {
  const { width, height } = imageSize(def, opts);
  const seed = opts.seed ?? def.seed;
  const model = new EarthModel(def.model, seed);
  const img = renderModel(model, { width, height, seed, fHz: opts.fHz, noise: opts.noise, clip: opts.clip });
  const png = await sharp(Buffer.from(img.grey.buffer, img.grey.byteOffset, img.grey.byteLength), {
    raw: { width, height, channels: 1 },
    limitInputPixels: false,
  })
    .toColourspace('b-w')
    .png({ compressionLevel: 6 })
    .toBuffer();
  return { png, ...geometryOf(model, def, width, height) };
}

/** The fixture written for a demo section (the geometry, not the image). */
export function fixtureOf(def: DemoSectionDef, geometry: SectionGeometry) {
  return {
    key: def.key,
    title: def.title,
    lineName: def.lineName,
    survey: def.survey,
    verticalDomain: def.verticalDomain,
    lineStart: def.lineStart,
    lineEnd: def.lineEnd,
    seed: def.seed,
    width: geometry.width,
    height: geometry.height,
    ties: geometry.ties,
    interpretation: geometry.interpretation,
    pixelGeometry: geometry.pixelGeometry,
    depthGeometry: geometry.depthGeometry,
  };
}
