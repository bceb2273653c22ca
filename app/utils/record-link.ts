/** The first address of an existing determination in a message, and the text either side of it. */
export function recordLink(message: string): { before: string; href: string; after: string } | null {
  const m = /\/determinations\/\d+/.exec(message);
  if (!m) return null;
  return { before: message.slice(0, m.index), href: m[0], after: message.slice(m.index + m[0].length) };
}
