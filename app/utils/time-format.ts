// Timestamps shown in the interface: one reading, in UTC, the same on the server and in the
// browser (so a page reads the same after hydration whatever the reader's time zone).
import { format } from "date-fns";

/**
 * A Date whose local fields are its UTC fields, for date-fns's formatters (which read local
 * fields; date-fns 4 keeps a Date subclass through its arithmetic and formatting).
 */
class UtcReading extends Date {
  override getFullYear() {
    return this.getUTCFullYear();
  }
  override getMonth() {
    return this.getUTCMonth();
  }
  override getDate() {
    return this.getUTCDate();
  }
  override getDay() {
    return this.getUTCDay();
  }
  override getHours() {
    return this.getUTCHours();
  }
  override getMinutes() {
    return this.getUTCMinutes();
  }
  override getSeconds() {
    return this.getUTCSeconds();
  }
  override getMilliseconds() {
    return this.getUTCMilliseconds();
  }
  override getTimezoneOffset() {
    return 0;
  }
}

type Moment = Date | number | string | null | undefined;

const reading = (value: Exclude<Moment, null | undefined>) => new UtcReading(new Date(value).getTime());

/** "2026-03-14 09:05 UTC"; null for no time. */
export function formatTimestamp(value: Moment): string | null {
  if (value === null || value === undefined) return null;
  return `${format(reading(value), "yyyy-MM-dd HH:mm")} UTC`;
}

/** "2026-03-14" (the UTC day); null for no time. */
export function formatDay(value: Moment): string | null {
  if (value === null || value === undefined) return null;
  return format(reading(value), "yyyy-MM-dd");
}
