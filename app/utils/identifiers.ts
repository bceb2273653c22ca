// Text that identifies something (lab codes, sample codes, site names, lab names): characters a
// person cannot see are refused with their name and position, and what remains is normalised
// (Unicode NFKC, dashes as "-", single spaces, trimmed) so look-alikes — a full-width letter, a
// non-breaking hyphen — are the same identifier. Client-safe: the form, the upload and the API all
// read identifiers through checkRow, which calls this.

const NAMES: [from: number, to: number, name: string][] = [
  [0x09, 0x09, "tab"],
  [0x0a, 0x0a, "line break"],
  [0x0d, 0x0d, "carriage return"],
  [0x00, 0x00, "NUL character"],
  [0x01, 0x1f, "control character"],
  [0x7f, 0x9f, "control character"],
  [0xad, 0xad, "soft hyphen"],
  [0x34f, 0x34f, "combining grapheme joiner"],
  [0x61c, 0x61c, "Arabic letter mark"],
  [0x115f, 0x1160, "Hangul filler"],
  [0x17b4, 0x17b5, "invisible Khmer vowel"],
  [0x180b, 0x180f, "Mongolian variation selector"],
  [0x200b, 0x200b, "zero-width space"],
  [0x200c, 0x200c, "zero-width non-joiner"],
  [0x200d, 0x200d, "zero-width joiner"],
  [0x200e, 0x200e, "left-to-right mark"],
  [0x200f, 0x200f, "right-to-left mark"],
  [0x2028, 0x2028, "line separator"],
  [0x2029, 0x2029, "paragraph separator"],
  [0x202a, 0x202e, "bidirectional control"],
  [0x2060, 0x2060, "word joiner"],
  [0x2061, 0x2064, "invisible operator"],
  [0x2066, 0x2069, "bidirectional isolate"],
  [0x206a, 0x206f, "deprecated format character"],
  [0x3164, 0x3164, "Hangul filler"],
  [0xfe00, 0xfe0f, "variation selector"],
  [0xfeff, 0xfeff, "byte-order mark (zero-width no-break space)"],
  [0xffa0, 0xffa0, "Hangul filler"],
  [0xfff9, 0xfffb, "interlinear annotation character"],
  [0x1d173, 0x1d17a, "invisible musical format character"],
  [0xe0000, 0xe007f, "tag character"],
  [0xe0100, 0xe01ef, "variation selector"],
];

function nameOf(cp: number): string | null {
  for (const [from, to, name] of NAMES) if (cp >= from && cp <= to) return name;
  // Anything else Unicode calls a format or control character, or a private-use or unassigned one.
  const ch = String.fromCodePoint(cp);
  if (/\p{Cc}|\p{Cf}/u.test(ch)) return "invisible format character";
  if (/\p{Co}/u.test(ch)) return "private-use character";
  if (/\p{Cn}/u.test(ch)) return "unassigned character";
  return null;
}

const hex = (cp: number) => `U+${cp.toString(16).toUpperCase().padStart(4, "0")}`;

/**
 * The characters of an identifier a person cannot see or type on purpose, in words: "a zero-width
 * space (U+200B) at position 4" (positions count characters from 1). Empty when there is none.
 */
export function invisibleCharacters(text: string): string[] {
  const found: string[] = [];
  let position = 0;
  for (const ch of text) {
    position++;
    const cp = ch.codePointAt(0)!;
    const name = nameOf(cp);
    if (name) found.push(`${/^[aeiou]/i.test(name) ? "an" : "a"} ${name} (${hex(cp)}) at position ${position}`);
  }
  return found;
}

/** The sentence for a refused identifier: "contains a zero-width space (U+200B) at position 4". */
export function invisibleCharactersProblem(text: string): string | null {
  const found = invisibleCharacters(text);
  if (found.length === 0) return null;
  const shown = found.slice(0, 3);
  const more = found.length > 3 ? ` and ${found.length - 3} more` : "";
  const list = shown.length === 1 ? shown[0] : `${shown.slice(0, -1).join(", ")} and ${shown.at(-1)}`;
  return `contains ${list}${more}`;
}

/** Dashes and hyphens that look like "-": hyphen, non-breaking hyphen, figure dash, en and em dash, minus… */
const DASHES = /[\u2010-\u2015\u2043\u2212\u2e3a\u2e3b\ufe58\ufe63\uff0d]/g;

/** The identifier as stored: NFKC, every dash as "-", runs of spaces as one, trimmed. */
export function normaliseIdentifier(text: string): string {
  return text.normalize("NFKC").replace(DASHES, "-").replace(/\s+/gu, " ").trim();
}

/** The form two identifiers are compared in: normalised and case-folded. */
export function identifierKey(text: string): string {
  return normaliseIdentifier(text).toUpperCase().toLowerCase();
}
