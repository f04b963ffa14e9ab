/**
 * Line ends to WGS84 longitude/latitude with proj4 (npm). Definitions are
 * built for the EPSG codes interpreters meet most on seismic lines: WGS84
 * geographic (4326), WGS 84 / UTM north (32601–32660) and south
 * (32701–32760), ETRS89 / UTM (25828–25838) and NAD83 / UTM (26901–26923).
 * Each matches the PROJ string that the EPSG registry gives for the code
 * (ETRS89 and NAD83 taken as coincident with WGS84, the null transformation
 * PROJ also applies at this accuracy).
 */
import proj4 from 'proj4';
import { SegyError } from './errors';

export function proj4Definition(epsg: number): string | null {
  if (epsg === 4326) return '+proj=longlat +datum=WGS84 +no_defs';
  if (epsg >= 32601 && epsg <= 32660) return `+proj=utm +zone=${epsg - 32600} +datum=WGS84 +units=m +no_defs`;
  if (epsg >= 32701 && epsg <= 32760) return `+proj=utm +zone=${epsg - 32700} +south +datum=WGS84 +units=m +no_defs`;
  if (epsg >= 25828 && epsg <= 25838) return `+proj=utm +zone=${epsg - 25800} +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=m +no_defs`;
  if (epsg >= 26901 && epsg <= 26923) return `+proj=utm +zone=${epsg - 26900} +datum=NAD83 +units=m +no_defs`;
  return null;
}

/** [x, y] in the given EPSG code to [longitude, latitude] in WGS84 degrees. */
export function toWgs84(epsg: number, points: ReadonlyArray<readonly [number, number]>): Array<[number, number]> {
  const def = proj4Definition(epsg);
  if (!def) throw new SegyError('segy_crs', 'epsg', 'upload form', `EPSG:${epsg} is not among the supported codes (4326, 32601–32660, 32701–32760, 25828–25838, 26901–26923)`);
  const t = proj4(def, 'EPSG:4326');
  return points.map(([x, y]) => {
    const [lon, lat] = t.forward([x, y]);
    return [lon, lat];
  });
}
