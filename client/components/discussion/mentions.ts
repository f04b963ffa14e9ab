/** A person who can be mentioned in a Note (a member of the project). */
export interface Mentionable {
  id: number;
  name: string;
}

/**
 * Ids of the members whose `@Name` appears in the text. Longer names are
 * matched first, so "@Ana Reef" does not also mention "Ana".
 */
export function mentionedIn(body: string, members: readonly Mentionable[]): number[] {
  let rest = body;
  const out: number[] = [];
  for (const m of [...members].sort((a, b) => b.name.length - a.name.length)) {
    const tag = `@${m.name}`;
    if (!m.name || !rest.includes(tag)) continue;
    out.push(m.id);
    rest = rest.split(tag).join(' ');
  }
  return out;
}
