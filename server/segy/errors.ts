/**
 * A SEG-Y file the reader refuses. `field` is the header field's key (see
 * fields.ts) and `bytes` its byte positions ("bytes 3225–3226" for the binary
 * header, "trace header bytes 115–116" for trace headers), so the upload can
 * answer 4xx `{ code, message, details }` naming the field and its position.
 */
export class SegyError extends Error {
  readonly code: string;
  readonly field: string;
  readonly bytes: string;
  readonly details: Record<string, unknown>;
  constructor(code: string, field: string, bytes: string, message: string, details: Record<string, unknown> = {}) {
    super(`${field} (${bytes}): ${message}`);
    this.name = 'SegyError';
    this.code = code;
    this.field = field;
    this.bytes = bytes;
    this.details = { field, bytes, ...details };
  }
}
