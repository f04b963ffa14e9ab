/**
 * Text that is safe to store, log and show: no control characters and no
 * broken Unicode. PostgreSQL refuses U+0000 in text and jsonb, and jsonb
 * refuses a lone UTF-16 surrogate (a text column silently turns it into
 * U+FFFD), so such input is refused here, with the field's path, before it
 * reaches a service.
 *
 * - C0 controls (U+0000–U+001F), DEL (U+007F) and C1 controls (U+0080–U+009F)
 *   are refused; multi-line fields (`{ multiline: true }`) keep tab, line feed
 *   and carriage return.
 * - A string that is not well-formed UTF-16 (a high surrogate without its low
 *   half, or a low one alone) is refused. This is what
 *   `String.prototype.isWellFormed` (ES2024) checks; a regular expression does
 *   it here so browsers without that method give the same answer.
 *
 * `safeText()` is a `z.string()` with the check first, so `.trim()`, `.min()`,
 * `.max()` and `.optional()` chain as usual (and trimming cannot hide a
 * control character at either end).
 */
import { z } from 'zod';

export const UNSAFE_TEXT_MESSAGE = 'must not contain control characters or broken Unicode';

const SINGLE_LINE_BAD = /[\u0000-\u001f\u007f-\u009f]/;
const MULTI_LINE_BAD = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/;
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/** True when `s` is well-formed UTF-16 (no lone surrogate). */
export function isWellFormedText(s: string): boolean {
  return !LONE_SURROGATE.test(s);
}

/** True when `s` has no control character (tab, LF and CR allowed when multi-line) and no lone surrogate. */
export function isSafeText(s: string, multiline = false): boolean {
  return !(multiline ? MULTI_LINE_BAD : SINGLE_LINE_BAD).test(s) && isWellFormedText(s);
}

/** Check functions, exported so a test can tell a guarded string schema from a bare `z.string()`. */
export const safeSingleLine = (s: string) => isSafeText(s, false);
export const safeMultiLine = (s: string) => isSafeText(s, true);

/**
 * A string schema refusing control characters (tab, LF and CR allowed when
 * `multiline`) and lone surrogates, with the message
 * "must not contain control characters or broken Unicode".
 */
type StringError = Exclude<Parameters<typeof z.string>[0], string | undefined>['error'];

export function safeText(opts: { multiline?: boolean; error?: StringError } = {}) {
  return z.string(opts.error === undefined ? undefined : { error: opts.error }).refine(opts.multiline ? safeMultiLine : safeSingleLine, { message: UNSAFE_TEXT_MESSAGE, abort: true });
}
