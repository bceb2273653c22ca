import { useRef, useState } from "react";
import { withCodes } from "#app/components/api-docs/with-codes.tsx";
import { formatCount } from "#app/utils/age-format.ts";
import { MAX_SHEET_ROWS, sheetColumnHelp, sheetText, type NumberedRow } from "#app/utils/calibrate-sheet.ts";

const PLACEHOLDER = [
  "lab_code\tc14_age\tc14_error\tcurve\tdelta_r\tdelta_r_error",
  "XMPL-101\t10250\t45",
  "XMPL-102\t9500\t70\tmarine20\t50\t40",
].join("\n");

type FileAnswer = { name: string; rows: NumberedRow[]; notices: string[] } | { error: string };

/**
 * The sheet of ages: pasted from a spreadsheet (its header row in the upload template's column
 * names) or read from a dropped CSV/XLSX file, which the server reads with the upload's limits and
 * writes into the box, where it can be corrected. Without script the file goes with the form.
 */
export function SheetInput({
  value,
  onChange,
  hydrated,
  fileNote,
}: {
  value: string;
  onChange: (text: string, note?: string) => void;
  hydrated: boolean;
  fileNote: string | null;
}) {
  const [over, setOver] = useState(false);
  const [reading, setReading] = useState<string | null>(null);
  const [fileError, setFileError] = useState<string | null>(null);
  const input = useRef<HTMLInputElement>(null);

  async function read(file: File) {
    setFileError(null);
    setReading(file.name);
    try {
      const body = new FormData();
      body.append("file", file);
      const res = await fetch("/calibrate/file", { method: "POST", body, headers: { Accept: "application/json" } });
      const answer = (await res.json().catch(() => ({ error: `The server answered ${res.status}.` }))) as FileAnswer;
      if ("error" in answer) {
        setFileError(answer.error);
        return;
      }
      const rows = Math.max(0, answer.rows.length - 1);
      onChange(
        sheetText(answer.rows),
        [`Read ${answer.name}: ${formatCount(rows)} ${rows === 1 ? "row" : "rows"} below the header.`, ...answer.notices].join(
          " ",
        ),
      );
    } catch {
      setFileError(`${file.name} could not be sent; check the connection and try again.`);
    } finally {
      setReading(null);
      if (input.current) input.current.value = "";
    }
  }

  return (
    <div className="space-y-3">
      <div
        className={`rounded-md border-2 border-dashed px-4 py-4 ${over ? "border-ice-500 bg-ice-50" : "border-rule"}`}
        data-testid="drop-zone"
        onDragOver={(e) => {
          e.preventDefault();
          setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={(e) => {
          e.preventDefault();
          setOver(false);
          const file = e.dataTransfer.files[0];
          if (file) void read(file);
        }}
      >
        <div className="field">
          <label htmlFor="sheet-file">Drop a CSV or Excel (.xlsx) file here, or choose one</label>
          <input
            ref={input}
            id="sheet-file"
            name="file"
            type="file"
            accept=".csv,.txt,.xlsx,text/csv,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
            className="text-sm file:mr-3 file:cursor-pointer file:rounded file:border file:border-rule file:bg-white file:px-3 file:py-1 file:font-[inherit] file:text-ink hover:file:border-ice-400"
            aria-describedby="sheet-file-help"
            onChange={(e) => {
              // With script the file is read at once; without, it goes with the form.
              const file = e.target.files?.[0];
              if (hydrated && file) void read(file);
            }}
          />
          <p id="sheet-file-help" className="text-sm text-muted">
            The first sheet is read, at most 4 MB and {formatCount(MAX_SHEET_ROWS)} rows; nothing is kept.
          </p>
        </div>
        {reading ? (
          <p role="status" className="mt-2 text-sm">
            Reading {reading}…
          </p>
        ) : null}
        {fileError ? (
          <p role="alert" className="mt-2 text-sm text-conflict">
            {fileError}
          </p>
        ) : null}
        {fileNote && !reading && !fileError ? (
          <p className="mt-2 text-sm" data-testid="file-note">
            {fileNote}
          </p>
        ) : null}
      </div>

      <div className="field">
        <label htmlFor="sheet">Or paste rows from a spreadsheet</label>
        <textarea
          id="sheet"
          name="sheet"
          rows={9}
          className="input font-mono text-sm"
          spellCheck={false}
          autoComplete="off"
          placeholder={PLACEHOLDER}
          aria-describedby="sheet-help"
          value={value}
          onChange={(e) => onChange(e.target.value)}
        />
      </div>
      <div id="sheet-help" className="space-y-1 text-sm text-muted">
        <p>
          Copy the rows with their header row: the columns are the upload template&apos;s (<code>lab_code</code>,{" "}
          <code>c14_age</code>, <code>c14_error</code>, <code>curve</code>, <code>delta_r</code>, <code>delta_r_error</code>
          …), in any order; other template columns are set aside. Without a header row the columns are read in that order. Rows
          without a curve use the curve chosen below.
        </p>
        <details>
          <summary className="cursor-pointer text-ink">Columns read here</summary>
          <dl className="mt-2 grid gap-x-4 gap-y-1 sm:grid-cols-[max-content_1fr]">
            {sheetColumnHelp().map((c) => (
              <div key={c.name} className="contents">
                <dt>
                  <code>{c.name}</code>
                </dt>
                <dd>{withCodes(c.help)}</dd>
              </div>
            ))}
          </dl>
        </details>
      </div>
    </div>
  );
}
