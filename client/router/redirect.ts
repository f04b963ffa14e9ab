/** A redirect target from the query string, accepted only when it is a path inside the app. */
export function safeRedirect(value: unknown): string | null {
  const s = Array.isArray(value) ? value[0] : value;
  if (typeof s !== 'string' || !s.startsWith('/') || s.startsWith('//') || s.startsWith('/\\')) return null;
  if (s.startsWith('/sign-in')) return null;
  return s;
}
