/**
 * Marks that request parsers carry for the OpenAPI document (document.ts):
 * a multipart parser says which form field holds the file, so the document
 * describes its body as `multipart/form-data` (the file plus the text fields
 * its `validate()` schema checks) instead of JSON.
 */
import type { RequestHandler } from 'express';

export const MULTIPART = Symbol('multipartFile');

/** Mark a multipart/form-data parser with the name of its file field; returns the same handler. */
export function multipartBody<H extends RequestHandler>(handler: H, fileField: string, description: string): H {
  Object.defineProperty(handler, MULTIPART, { value: { fileField, description } });
  return handler;
}

/** The file field of a multipart parser, when the handler is one. */
export function multipartOf(handler: unknown): { fileField: string; description: string } | null {
  return typeof handler === 'function' && MULTIPART in handler ? (handler as unknown as Record<symbol, { fileField: string; description: string }>)[MULTIPART] : null;
}
