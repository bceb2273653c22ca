import { formatWithError } from "#app/utils/age-format.ts";

/** A two-column definition list for a record's fields; missing values read as an em dash. */
export function DetailList({ items }: { items: [label: React.ReactNode, value: React.ReactNode][] }) {
  return (
    <dl className="grid grid-cols-[minmax(9rem,auto)_1fr] gap-x-6 gap-y-1.5">
      {items.map(([label, value], i) => (
        <div key={i} className="contents">
          <dt className="text-muted">{label}</dt>
          <dd>{value === null || value === undefined || value === "" ? <span className="text-muted">—</span> : value}</dd>
        </div>
      ))}
    </dl>
  );
}

/** A stored number as entered (up to six decimals), grouped for reading; nothing for null. */
export function showNumber(x: number | null | undefined, unit?: string): string | null {
  if (x === null || x === undefined) return null;
  const s = x.toLocaleString("en", { maximumFractionDigits: 6 });
  return unit ? `${s} ${unit}` : s;
}

/** "value ± error unit" at honest precision (the error to two significant figures), or the value alone. */
export function showWithError(x: number | null | undefined, err: number | null | undefined, unit?: string): string | null {
  if (x === null || x === undefined) return null;
  if (err === null || err === undefined) return showNumber(x, unit);
  return formatWithError(x, err, unit ?? "");
}
