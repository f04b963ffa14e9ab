/** The one error body the API answers with: `{ code, message, details? }`. */
export interface ApiErrorBody {
  code: string;
  message: string;
  details?: unknown;
}

/** Turn zod issues into `path: message` strings, e.g. `buildups[0].cycles[1].marginLeft: outside the top's x-range`. */
export function formatIssuePath(path: ReadonlyArray<PropertyKey>): string {
  let out = '';
  for (const p of path) {
    if (typeof p === 'number') out += `[${p}]`;
    else out += out ? `.${String(p)}` : String(p);
  }
  return out;
}
