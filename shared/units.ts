/**
 * Display units. The engine works in metres (and m², m³, m/s, m/Myr)
 * throughout; conversion to a person's preferred length unit happens only
 * where numbers are shown or exported (Readings, Ledger, Ruler, register,
 * reports, CSV/GeoJSON). TWT stays in milliseconds and angles in degrees
 * whatever the preference.
 *
 * The foot is the international foot of the 1959 agreement between the
 * national standards laboratories of the United States, the United Kingdom,
 * Canada, Australia, New Zealand and South Africa: 1 yard = 0.9144 m exactly,
 * hence 1 ft = 0.3048 m exactly (NIST Special Publication 811, appendix B;
 * NIST Handbook 44, appendix C). The US survey foot (1200/3937 m) is not used.
 */

export const LENGTH_UNITS = ['m', 'ft'] as const;
export type LengthUnit = (typeof LENGTH_UNITS)[number];

/** The international foot in metres (exact by definition, 1959). */
export const FOOT_M = 0.3048;

export const DEFAULT_LENGTH_UNIT: LengthUnit = 'm';

export function isLengthUnit(value: unknown): value is LengthUnit {
  return value === 'm' || value === 'ft';
}

/** Metres per one display unit of length. */
function metresPer(unit: LengthUnit): number {
  return unit === 'ft' ? FOOT_M : 1;
}

/** A length in metres → the display unit (m or international feet). */
export function toDisplayLength(metres: number, unit: LengthUnit): number {
  return unit === 'ft' ? metres / FOOT_M : metres;
}

/** A length in the display unit → metres. */
export function fromDisplayLength(value: number, unit: LengthUnit): number {
  return value * metresPer(unit);
}

/** Unit label of a length: `m` or `ft`. */
export function lengthLabel(unit: LengthUnit): string {
  return unit;
}

/** Area in m² → the display unit (m² or ft²). */
export function toDisplayArea(squareMetres: number, unit: LengthUnit): number {
  const f = metresPer(unit);
  return squareMetres / (f * f);
}

export function fromDisplayArea(value: number, unit: LengthUnit): number {
  const f = metresPer(unit);
  return value * f * f;
}

export function areaLabel(unit: LengthUnit): string {
  return unit === 'ft' ? 'ft²' : 'm²';
}

/** Volume in m³ → the display unit (m³ or ft³). */
export function toDisplayVolume(cubicMetres: number, unit: LengthUnit): number {
  const f = metresPer(unit);
  return cubicMetres / (f * f * f);
}

export function fromDisplayVolume(value: number, unit: LengthUnit): number {
  const f = metresPer(unit);
  return value * f * f * f;
}

export function volumeLabel(unit: LengthUnit): string {
  return unit === 'ft' ? 'ft³' : 'm³';
}

/** Velocity in m/s → the display unit (m/s or ft/s). */
export function toDisplayVelocity(metresPerSecond: number, unit: LengthUnit): number {
  return toDisplayLength(metresPerSecond, unit);
}

export function fromDisplayVelocity(value: number, unit: LengthUnit): number {
  return fromDisplayLength(value, unit);
}

export function velocityLabel(unit: LengthUnit): string {
  return unit === 'ft' ? 'ft/s' : 'm/s';
}

/** Accumulation / growth rate in m/Myr → the display unit (m/Myr or ft/Myr). */
export function toDisplayRate(metresPerMyr: number, unit: LengthUnit): number {
  return toDisplayLength(metresPerMyr, unit);
}

export function fromDisplayRate(value: number, unit: LengthUnit): number {
  return fromDisplayLength(value, unit);
}

export function rateLabel(unit: LengthUnit): string {
  return unit === 'ft' ? 'ft/Myr' : 'm/Myr';
}

/** Quantities a column or axis may carry; `null`-safe converters below. */
export type Quantity = 'length' | 'area' | 'volume' | 'velocity' | 'rate' | 'angle' | 'ratio' | 'twt';

/** Convert an SI value of the given quantity to the display unit (angles, ratios and TWT are unchanged). */
export function toDisplay(quantity: Quantity, si: number, unit: LengthUnit): number {
  switch (quantity) {
    case 'length':
      return toDisplayLength(si, unit);
    case 'area':
      return toDisplayArea(si, unit);
    case 'volume':
      return toDisplayVolume(si, unit);
    case 'velocity':
      return toDisplayVelocity(si, unit);
    case 'rate':
      return toDisplayRate(si, unit);
    default:
      return si;
  }
}

/** Convert a display value of the given quantity back to SI (metres, m², m³, m/s, m/Myr). */
export function fromDisplay(quantity: Quantity, value: number, unit: LengthUnit): number {
  switch (quantity) {
    case 'length':
      return fromDisplayLength(value, unit);
    case 'area':
      return fromDisplayArea(value, unit);
    case 'volume':
      return fromDisplayVolume(value, unit);
    case 'velocity':
      return fromDisplayVelocity(value, unit);
    case 'rate':
      return fromDisplayRate(value, unit);
    default:
      return value;
  }
}

/** Unit label of a quantity in the display unit; '' for ratios. */
export function quantityLabel(quantity: Quantity, unit: LengthUnit): string {
  switch (quantity) {
    case 'length':
      return lengthLabel(unit);
    case 'area':
      return areaLabel(unit);
    case 'volume':
      return volumeLabel(unit);
    case 'velocity':
      return velocityLabel(unit);
    case 'rate':
      return rateLabel(unit);
    case 'angle':
      return '°';
    case 'twt':
      return 'ms';
    default:
      return '';
  }
}

/** A header with its unit in parentheses, e.g. `Height (ft)`; ratios get no suffix. */
export function withUnit(title: string, quantity: Quantity, unit: LengthUnit): string {
  const label = quantityLabel(quantity, unit);
  return label ? `${title} (${label})` : title;
}

/**
 * The engine's sentences (classification evidence, drowning signs) state
 * lengths in metres as "<number> m", with lists and ranges ("12.0 → 9.5 m",
 * "x 6300.0–10300.0 m"). For the reader's unit the numbers of each such run
 * are converted to feet (one decimal) and the unit renamed; "m/s", "m²",
 * "m³" and words are left alone. Metres: the text as it is.
 */
export function lengthsInText(text: string, unit: LengthUnit): string {
  if (unit === 'm') return text;
  const num = String.raw`-?\d+(?:\.\d+)?`;
  const run = new RegExp(String.raw`${num}(?:\s*(?:→|–|-(?=\d))\s*${num})*\s?m(?![\w/²³])`, 'g');
  return text.replace(run, (m) => m.replace(/m$/, 'ft').replace(new RegExp(num, 'g'), (v) => (Number(v) / FOOT_M).toFixed(1)));
}
