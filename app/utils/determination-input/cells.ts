import type { ColumnSpec } from "#app/utils/determination-input/columns.ts";
import { invisibleCharacters, invisibleCharactersProblem, normaliseIdentifier } from "#app/utils/identifiers.ts";
import { nearest } from "#app/utils/nearest.ts";

// ---------------------------------------------------------------- cell readers

export type Read<T> = { value?: T; issue?: string };

const DATE_TEXT = [
  /^\d{4}-\d{1,2}-\d{1,2}([ T]\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?Z?)?$/,
  /^\d{1,2}[./-]\d{1,2}[./-]\d{2,4}$/,
  /^\d{1,2}[ -](jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*[ -]\d{2,4}$/i,
  /^(jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*\.? \d{1,2},? \d{4}$/i,
];

function isDateText(t: string): boolean {
  return DATE_TEXT.some((re) => re.test(t));
}

function isDateValue(v: unknown): v is Date {
  return v instanceof Date || Object.prototype.toString.call(v) === "[object Date]";
}

/** Blank: nothing, null, or only white space. */
export function isBlankCell(v: unknown): boolean {
  return v == null || (typeof v === "string" && v.trim() === "");
}

const PLAIN_NUMBER = /^[-+−]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i;
const COMMA_DECIMAL = /^[-+−]?\d{1,3}(\.\d{3})*,\d+$|^[-+−]?\d+,\d+$/;
const NUMBER_WITH_UNIT = /^([-+−]?(?:\d+[.,]?\d*|[.,]\d+))\s*([a-zA-Zµμ%‰°'"][^]*)$/;

function unitPhrase(spec: ColumnSpec): string {
  return spec.unit ? ` in ${spec.unit}` : "";
}

function unitAdvice(spec: ColumnSpec, text: string, num: string, unit: string): string {
  const u = unit.trim().toLowerCase();
  const n = Number(num.replace(",", ".").replace("−", "-"));
  const base = `"${text}": ${spec.name} takes a plain number${unitPhrase(spec)}; leave the unit out`;
  if ((u === "ka" || u === "kyr" || u === "ky") && spec.unit.includes("yr")) {
    return `${base} (${num} ka is ${Math.round(n * 1000)} years).`;
  }
  if ((u === "bp" || u.startsWith("cal")) && spec.name === "c14_age") {
    return `${base}. The age is a conventional ¹⁴C age, not calibrated.`;
  }
  if (u === "%" && spec.name === "water_content") return `${base} and give a fraction (${num} % is ${n / 100}).`;
  if (u === "pmc" && spec.name === "f14c") return `${base}; F¹⁴C is a fraction (${num} pMC is ${n / 100}).`;
  if (u.startsWith("°") || u.startsWith("'") || /^[nsew]$/.test(u)) {
    return `"${text}": give ${spec.name} in decimal degrees, south and west negative (e.g. 58.71 or -64.35).`;
  }
  return `${base}.`;
}

export function readNumber(v: unknown, spec: ColumnSpec): Read<number> {
  if (isBlankCell(v)) return {};
  if (typeof v === "number") {
    if (!Number.isFinite(v)) return { issue: `${spec.name} is not a finite number.` };
    return { value: v };
  }
  if (typeof v === "boolean") return { issue: `${spec.name} takes a number${unitPhrase(spec)}, not ${v ? "TRUE" : "FALSE"}.` };
  if (isDateValue(v)) {
    return {
      issue: `This cell holds a date; ${spec.name} takes a number${unitPhrase(spec)}. Check that the spreadsheet did not turn the value into a date, or that the columns are not shifted.`,
    };
  }
  if (typeof v !== "string") return { issue: `${spec.name} takes a number${unitPhrase(spec)}.` };
  const t = v.trim();
  if (PLAIN_NUMBER.test(t)) return { value: Number(t.replace("−", "-")) };
  if (COMMA_DECIMAL.test(t)) {
    return { issue: `"${t}": use a point as the decimal separator (e.g. ${t.replace(/\./g, "").replace(",", ".")}).` };
  }
  if (/^[-+−]?\d{1,3}(,\d{3})+(\.\d+)?$/.test(t)) {
    return { issue: `"${t}": leave out the thousands separators (e.g. ${t.replace(/,/g, "")}).` };
  }
  if (isDateText(t)) {
    return { issue: `"${t}" is a date; ${spec.name} takes a number${unitPhrase(spec)}. Are the columns shifted?` };
  }
  const pm = /^([-+−]?[\d.]+)\s*(±|\+\/-|\+-)\s*([\d.]+)$/.exec(t);
  if (pm) return { issue: `"${t}": put the value in ${spec.name} and its error in the error column.` };
  const withUnit = NUMBER_WITH_UNIT.exec(t);
  if (withUnit) return { issue: unitAdvice(spec, t, withUnit[1]!, withUnit[2]!) };
  if (/^[<>≥≤]\s*\d/.test(t)) {
    return spec.name === "c14_age"
      ? { issue: `"${t}": write the number alone and set greater_than to yes for a “greater than” age.` }
      : { issue: `"${t}": ${spec.name} takes a plain number${unitPhrase(spec)}.` };
  }
  return { issue: `"${truncate(t)}" is not a number; ${spec.name} takes a number${unitPhrase(spec)}.` };
}

export function readInteger(v: unknown, spec: ColumnSpec): Read<number> {
  if (spec.name === "measurement_year") {
    if (isDateValue(v)) return { issue: `This cell holds a date; give the year only (e.g. ${v.getUTCFullYear()}).` };
    if (typeof v === "string" && isDateText(v.trim()))
      return { issue: `"${v.trim()}" is a date; give the year only (e.g. 2023).` };
  }
  const r = readNumber(v, spec);
  if (r.value === undefined) return r;
  if (!Number.isInteger(r.value)) return { issue: `${spec.name} takes a whole number (got ${r.value}).` };
  return r;
}

export function truncate(t: string, n = 40): string {
  return t.length > n ? `${t.slice(0, n)}…` : t;
}

export function readText(v: unknown, spec: ColumnSpec, max = 200): Read<string> {
  if (isBlankCell(v)) return {};
  if (isDateValue(v)) {
    return {
      issue: `This cell holds a date, not the ${spec.label.toLowerCase()}; format the column as text in the spreadsheet and type it again.`,
    };
  }
  const t = (typeof v === "number" || typeof v === "boolean" ? String(v) : typeof v === "string" ? v : "").trim();
  if (t === "") return { issue: `${spec.name} takes text.` };
  if (t.length > max) return { issue: `${spec.name} is too long (${t.length} characters; at most ${max}).` };
  return { value: t };
}

/**
 * Text that identifies something (a lab code, sample code, site or lab name): characters nobody can
 * see are refused by name and position, and the rest is normalised (identifiers.ts), so a full-width
 * letter or a non-breaking hyphen reads as what it looks like.
 */
export function readIdentifier(v: unknown, spec: ColumnSpec): Read<string> {
  if (typeof v === "string") {
    const trimmed = v.trim();
    const problem = invisibleCharactersProblem(trimmed);
    if (problem) {
      const many = invisibleCharacters(trimmed).length > 1;
      return {
        issue: `The ${spec.label.toLowerCase()} ${problem}; type it again without ${many ? "those characters" : "that character"}.`,
      };
    }
  }
  const r = readText(v, spec);
  if (r.value === undefined) return r;
  const value = normaliseIdentifier(r.value);
  return value ? { value } : { issue: `${spec.name} takes text.` };
}

const YES = new Set(["yes", "y", "true", "1", "ja", "oui"]);
const NO = new Set(["no", "n", "false", "0", "nein", "non"]);

export function readYesNo(v: unknown, spec: ColumnSpec): Read<boolean> {
  if (isBlankCell(v)) return {};
  if (typeof v === "boolean") return { value: v };
  if (typeof v === "number" && (v === 0 || v === 1)) return { value: v === 1 };
  const t = String(v).trim().toLowerCase();
  if (YES.has(t)) return { value: true };
  if (NO.has(t)) return { value: false };
  return { issue: `${spec.name} takes yes or no (got "${truncate(String(v))}").` };
}

export function readChoice<T extends string>(v: unknown, spec: ColumnSpec, choices: readonly T[]): Read<T> {
  const r = readText(v, spec);
  if (r.value === undefined) return r as Read<T>;
  const match = choices.find((c) => c.toLowerCase() === r.value!.toLowerCase());
  if (match) return { value: match };
  const near = nearest(r.value, choices);
  return {
    issue: `"${truncate(r.value)}" is not a ${spec.label.toLowerCase()}; use ${listWords(choices)}${near ? ` (did you mean ${near}?)` : ""}.`,
  };
}

export function listWords(words: readonly string[]): string {
  return words.length <= 1 ? (words[0] ?? "") : `${words.slice(0, -1).join(", ")} or ${words[words.length - 1]}`;
}
