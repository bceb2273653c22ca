import { COLUMNS } from "#app/utils/determination-input/columns.ts";

// The row check speaks in the template's column names ("Give c14_age with its c14_error."), which
// is right for a spreadsheet or the API. The form has labels, not columns: its messages name the
// fields as the form shows them ("Give ¹⁴C age with its ¹⁴C age error.").

/** A label as it reads mid-sentence: "Dose rate" → "dose rate", but "De", "K error", "ΔR" stay. */
function midSentence(label: string): string {
  const first = label.split(/[\s-]/)[0] ?? "";
  const plainWord = first.length > 2 && /^[A-Z][a-z]+$/.test(first);
  return plainWord ? label[0]!.toLowerCase() + label.slice(1) : label;
}

// Only code-like names (with an underscore or a digit) are replaced: "material" or "latitude" in
// a message are already words.
const CODE_NAMES = COLUMNS.filter((c) => /[_\d]/.test(c.name)).sort((a, b) => b.name.length - a.name.length);
const LABEL = new Map(CODE_NAMES.map((c) => [c.name, midSentence(c.label)]));
const PATTERN = new RegExp(`(?<![\\w/])(${CODE_NAMES.map((c) => c.name).join("|")})(?![\\w/])`, "g");

/** A row-check message in the words of the form: field labels for column names, a determination for a row. */
export function inFormWords(message: string): string {
  const words = message
    .replace(PATTERN, (name, _n: string, offset: number) => {
      const label = LABEL.get(name) ?? name;
      return offset === 0 ? label[0]!.toUpperCase() + label.slice(1) : label;
    })
    .replace(/\b([Aa]) (radiocarbon|luminescence) row\b/g, "$1 $2 determination");
  return words;
}
