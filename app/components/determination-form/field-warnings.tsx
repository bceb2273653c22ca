import { createContext, useContext } from "react";
import type { RowIssue } from "#app/utils/determination-input/row.ts";
import { inFormWords } from "#app/utils/determination-input/form-words.ts";

/*
 * Cautions at the field: the live preview runs the registry's row check and sends back its
 * warnings (an input the registry will assume, a feldspar without its internal K, a southern site
 * on a northern curve). They never block saving; each is shown under the field it concerns.
 */

const WarningsContext = createContext<ReadonlyMap<string, string[]>>(new Map());

export function FieldWarningsProvider({ warnings, children }: { warnings: RowIssue[] | undefined; children: React.ReactNode }) {
  const byColumn = new Map<string, string[]>();
  for (const w of warnings ?? []) byColumn.set(w.column, [...(byColumn.get(w.column) ?? []), inFormWords(w.message)]);
  return <WarningsContext.Provider value={byColumn}>{children}</WarningsContext.Provider>;
}

/** The cautions for one column, if any; `id` lets the input point at them with aria-describedby. */
export function FieldWarning({ column, id }: { column: string; id?: string }) {
  const messages = useContext(WarningsContext).get(column);
  if (!messages?.length) return null;
  return (
    <ul id={id} className="text-sm text-caution" data-testid={`warning-${column}`}>
      {messages.map((m) => (
        <li key={m}>
          <span aria-hidden="true">⚠ </span>
          {m}
        </li>
      ))}
    </ul>
  );
}
