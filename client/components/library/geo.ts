/**
 * Geography of the Analogue library map: the offline world outline and the
 * area filters (a box or a radius) drawn on the map. Pure; turf does the
 * spherical work.
 */
import { booleanPointInPolygon, circle, distance, point, polygon } from '@turf/turf';
import type { Feature, FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
// Natural Earth 1:110m land, shipped with the app through the world-atlas package.
import land110m from 'world-atlas/land-110m.json';

/** A box in degrees (west, south, east, north) or a circle around a centre with a radius in km. */
export type GeoFilter =
  | { kind: 'box'; west: number; south: number; east: number; north: number }
  | { kind: 'radius'; lon: number; lat: number; km: number };

/** An analogue placed on the map. */
export interface MapPoint {
  id: number;
  name: string;
  lon: number;
  lat: number;
  /** Drawn larger in sand when true (the analogue being looked at). */
  highlight?: boolean;
}

let landCache: FeatureCollection<Polygon | MultiPolygon> | Feature<Polygon | MultiPolygon> | null = null;

/** The land outline as GeoJSON, converted once from the TopoJSON file. */
export function worldLand(): FeatureCollection<Polygon | MultiPolygon> | Feature<Polygon | MultiPolygon> {
  if (!landCache) {
    const topo = land110m as unknown as Topology<{ land: GeometryCollection }>;
    landCache = feature(topo, topo.objects.land) as FeatureCollection<Polygon | MultiPolygon>;
  }
  return landCache;
}

const round = (v: number, step: number) => Math.round(v / step) * step;

/** A box from two corners (any order), clamped to the globe and rounded to 0.01°. */
export function boxFromCorners(a: [number, number], b: [number, number]): GeoFilter {
  const clampLon = (v: number) => Math.max(-180, Math.min(180, v));
  const clampLat = (v: number) => Math.max(-90, Math.min(90, v));
  return {
    kind: 'box',
    west: round(clampLon(Math.min(a[0], b[0])), 0.01),
    east: round(clampLon(Math.max(a[0], b[0])), 0.01),
    south: round(clampLat(Math.min(a[1], b[1])), 0.01),
    north: round(clampLat(Math.max(a[1], b[1])), 0.01),
  };
}

/** A circle from its centre and a point on its rim; the radius is the great-circle distance (turf, km), rounded to 1 km. */
export function radiusFromPoints(centre: [number, number], rim: [number, number]): GeoFilter {
  const km = Math.max(1, Math.round(distance(point(centre), point(rim), { units: 'kilometers' })));
  return { kind: 'radius', lon: round(centre[0], 0.01), lat: round(centre[1], 0.01), km };
}

/** The filter's outline as a GeoJSON polygon: box edges densified so they follow parallels and meridians under any projection. */
export function filterOutline(f: GeoFilter): Feature<Polygon> {
  if (f.kind === 'radius') return circle([f.lon, f.lat], f.km, { steps: 96, units: 'kilometers' });
  const ring: [number, number][] = [];
  const n = 24;
  for (let i = 0; i <= n; i++) ring.push([f.west + ((f.east - f.west) * i) / n, f.south]);
  for (let i = 1; i <= n; i++) ring.push([f.east, f.south + ((f.north - f.south) * i) / n]);
  for (let i = 1; i <= n; i++) ring.push([f.east - ((f.east - f.west) * i) / n, f.north]);
  for (let i = 1; i <= n; i++) ring.push([f.west, f.north - ((f.north - f.south) * i) / n]);
  // Counter-clockwise, as RFC 7946 asks (and as turf's circle comes out).
  return polygon([ring]);
}

/**
 * The same polygon with its rings reversed for drawing with d3-geo, which reads
 * a clockwise ring as the small area inside it (a counter-clockwise one would be
 * the rest of the globe).
 */
export function forD3(f: Feature<Polygon>): Feature<Polygon> {
  return { ...f, geometry: { ...f.geometry, coordinates: f.geometry.coordinates.map((r) => [...r].reverse()) } };
}

/** Does a location fall in the area? Boxes compare degrees; circles use turf's great-circle distance. */
export function insideGeoFilter(lon: number, lat: number, f: GeoFilter): boolean {
  if (f.kind === 'box') return lon >= f.west && lon <= f.east && lat >= f.south && lat <= f.north;
  return distance(point([lon, lat]), point([f.lon, f.lat]), { units: 'kilometers' }) <= f.km;
}

/** Point-in-polygon with turf, for outlines other than the two filter shapes. */
export function insideOutline(lon: number, lat: number, outline: Feature<Polygon>): boolean {
  return booleanPointInPolygon(point([lon, lat]), outline);
}
