/** API values and column names inside prose (intcal20, c14_error, in_review) set as code, the rest as words. */
export function withCodes(text: string): React.ReactNode[] {
  return text
    .split(/\b((?:intcal|marine)\d\d|[a-z][a-z0-9]*_[a-z0-9_]+)\b/)
    .map((part, i) => (i % 2 === 1 ? <code key={i}>{part}</code> : part));
}
