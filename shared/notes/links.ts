/**
 * Message text → parts for display: plain text and links. The client renders
 * the parts with text interpolation and `<a>` elements (never as HTML), so
 * `<script>` or `<img onerror>` in a message shows as the characters typed.
 *
 * Links: `http://` or `https://` followed by non-space characters; trailing
 * punctuation that usually ends a sentence (`.,;:!?)]}'"`) stays text unless
 * a `(` inside the link balances a `)`. Only http(s) become links, so
 * `javascript:` and `data:` stay text.
 */
export type TextPart = { kind: 'text'; text: string } | { kind: 'link'; text: string; href: string };

const URL_RE = /https?:\/\/[^\s<>"]+/gi;
const TRAILING = /[.,;:!?'"\]}]$/;

function trimLink(raw: string): string {
  let s = raw;
  for (;;) {
    if (TRAILING.test(s)) {
      s = s.slice(0, -1);
      continue;
    }
    if (s.endsWith(')')) {
      const open = (s.match(/\(/g) ?? []).length;
      const close = (s.match(/\)/g) ?? []).length;
      if (close > open) {
        s = s.slice(0, -1);
        continue;
      }
    }
    return s;
  }
}

/** Split text into text and link parts (adjacent text merged; empty input → []). */
export function splitLinks(text: string): TextPart[] {
  const out: TextPart[] = [];
  const pushText = (t: string) => {
    if (!t) return;
    const last = out[out.length - 1];
    if (last && last.kind === 'text') last.text += t;
    else out.push({ kind: 'text', text: t });
  };
  let at = 0;
  for (const m of text.matchAll(URL_RE)) {
    const start = m.index ?? 0;
    const link = trimLink(m[0]);
    // a bare scheme ("https://") is not a link
    if (link.replace(/^https?:\/\//i, '').length === 0) continue;
    pushText(text.slice(at, start));
    out.push({ kind: 'link', text: link, href: link });
    at = start + link.length;
  }
  pushText(text.slice(at));
  return out;
}
