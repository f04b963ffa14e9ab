/**
 * Errors raised by the measurement engine.
 *
 * Every refusal names the path of the bad field in the notation of
 * `formatIssuePath` (e.g. `buildups[0].cycles[1].marginLeft`), and its message
 * starts with that path: `buildups[0].cycles[1].marginLeft: outside the top's x-range`.
 */
export class MeasureInputError extends Error {
  /** Path of the bad field, e.g. `buildups[0].cycles[1].marginLeft` ('' for the whole input). */
  readonly path: string;
  /** All problems found, each as `path: message` (the first one is `message`). */
  readonly issues: string[];

  constructor(path: string, detail: string, issues?: string[]) {
    const message = path ? `${path}: ${detail}` : detail;
    super(message);
    this.name = 'MeasureInputError';
    this.path = path;
    this.issues = issues && issues.length ? issues : [message];
  }
}

/** A calibration that cannot be fitted (too few ties, collinear ties, singular map). Path `calibration` by default. */
export class CalibrationError extends MeasureInputError {
  constructor(detail: string, path = 'calibration') {
    super(path, detail);
    this.name = 'CalibrationError';
  }
}
