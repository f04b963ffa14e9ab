/**
 * The section page's polarity line: "Polarity: <note>", without saying the
 * word twice when the note itself starts with it ("Polarity: normal (SEG)",
 * "polarity - reverse", "Polarity normal").
 */
const LEADING_WORD = /^\s*polarity\b\s*[:\-–—]?\s*/i;

export function polarityLine(note: string): string {
  const rest = note.replace(LEADING_WORD, '').trim();
  return `Polarity: ${rest || note.trim()}`;
}
