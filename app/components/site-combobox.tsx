import { useEffect, useId, useState } from "react";
import { useFetcher } from "react-router";
import type { loader as siteSearchLoader } from "#app/routes/resources/site-search.ts";

export type ChosenSite = { id: number; name: string; latitude: number; longitude: number };
type Hit = ChosenSite & { distanceKm: number | null };

const DEBOUNCE_MS = 150;

/**
 * A searchable site chooser (the ARIA 1.2 combobox pattern with a list): type part of a name, or
 * "latitude, longitude" for the nearest sites; ↓/↑ move through the answers, Enter chooses, Escape
 * closes. Answers come from the server (/api/site-search, capped), so it scales to any number of
 * sites. Without script the text field is sent as `site_query` and the server resolves an exact name.
 */
export function SiteCombobox({
  inputId,
  label,
  name,
  chosen,
  onChoose,
  invalid,
  describedBy,
  near,
}: {
  inputId: string;
  label: string;
  /** Name of the hidden field carrying the chosen site's id. */
  name: string;
  chosen: ChosenSite | null;
  onChoose: (site: ChosenSite | null) => void;
  invalid?: boolean;
  describedBy?: string;
  /** Renders beside the field something that can ask for the sites nearest a "latitude, longitude". */
  near?: (searchNear: (point: string) => void) => React.ReactNode;
}) {
  const listId = useId();
  const fetcher = useFetcher<typeof siteSearchLoader>();
  const [text, setText] = useState(chosen?.name ?? "");
  const [open, setOpen] = useState(false);
  const [active, setActive] = useState(-1);
  // The text to search for; a change asks the server after a short pause (typing stays smooth).
  const [query, setQuery] = useState<string | null>(null);
  const hits: Hit[] = (fetcher.data as { sites?: Hit[] } | undefined)?.sites ?? [];
  const loading = fetcher.state !== "idle";

  const search = (q: string) => setQuery(q);
  useEffect(() => {
    if (query === null) return;
    const timer = setTimeout(() => void fetcher.load(`/api/site-search?q=${encodeURIComponent(query)}`), DEBOUNCE_MS);
    return () => clearTimeout(timer);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- only a new query starts a search; `fetcher` changes identity while it loads
  }, [query]);
  const searchNear = (point: string) => {
    setText(point);
    setOpen(true);
    setActive(-1);
    if (chosen) onChoose(null);
    search(point);
  };

  const choose = (hit: Hit) => {
    onChoose({ id: hit.id, name: hit.name, latitude: hit.latitude, longitude: hit.longitude });
    setText(hit.name);
    setOpen(false);
    setActive(-1);
  };

  const onKeyDown = (e: React.KeyboardEvent<HTMLInputElement>) => {
    if (e.key === "ArrowDown" || e.key === "ArrowUp") {
      e.preventDefault();
      if (!open) {
        setOpen(true);
        if (!fetcher.data) search(text);
        setActive(e.key === "ArrowDown" ? 0 : hits.length - 1);
        return;
      }
      if (hits.length === 0) return;
      const step = e.key === "ArrowDown" ? 1 : -1;
      setActive((a) => (a + step + hits.length) % hits.length);
    } else if (e.key === "Enter") {
      if (open && active >= 0 && hits[active]) {
        e.preventDefault();
        choose(hits[active]);
      }
    } else if (e.key === "Escape") {
      if (open) {
        e.preventDefault();
        setOpen(false);
        setActive(-1);
      } else if (text) {
        setText("");
        onChoose(null);
      }
    }
  };

  const activeId = open && active >= 0 && hits[active] ? `${listId}-${hits[active].id}` : undefined;
  return (
    <div className="relative">
      <label htmlFor={inputId}>{label}</label>
      <input
        id={inputId}
        name="site_query"
        type="text"
        role="combobox"
        aria-autocomplete="list"
        aria-expanded={open}
        aria-controls={listId}
        aria-activedescendant={activeId}
        aria-invalid={invalid || undefined}
        aria-describedby={describedBy}
        autoComplete="off"
        spellCheck={false}
        className="input w-full"
        placeholder="Type part of a name, or latitude, longitude"
        value={text}
        onChange={(e) => {
          const value = e.currentTarget.value;
          setText(value);
          setOpen(true);
          setActive(-1);
          if (chosen && value !== chosen.name) onChoose(null);
          search(value);
        }}
        onFocus={() => {
          if (!fetcher.data) search(text);
        }}
        onKeyDown={onKeyDown}
        onBlur={() => setOpen(false)}
      />
      <input type="hidden" name={name} value={chosen ? String(chosen.id) : ""} />
      <ul
        id={listId}
        role="listbox"
        aria-label={`${label}: answers`}
        hidden={!open}
        className="absolute z-[1000] mt-1 max-h-72 w-full overflow-y-auto rounded border border-rule bg-white shadow-lg"
      >
        {hits.map((hit, i) => (
          <li
            key={hit.id}
            id={`${listId}-${hit.id}`}
            role="option"
            aria-selected={i === active}
            className={`cursor-pointer px-3 py-1.5 ${i === active ? "bg-ice-100" : "hover:bg-ice-50"}`}
            // mousedown, not click: the input keeps focus and the list is not closed by its blur first.
            onMouseDown={(e) => {
              e.preventDefault();
              choose(hit);
            }}
          >
            <span className="font-semibold">{hit.name}</span>{" "}
            <span className="text-sm text-muted">
              {hit.latitude.toFixed(4)}°, {hit.longitude.toFixed(4)}°
              {hit.distanceKm != null
                ? ` · ${hit.distanceKm < 10 ? hit.distanceKm.toFixed(1) : Math.round(hit.distanceKm).toLocaleString("en")} km away`
                : ""}
            </span>
          </li>
        ))}
        {hits.length === 0 ? (
          <li role="presentation" className="px-3 py-1.5 text-sm text-muted">
            {loading
              ? "Searching…"
              : text.trim()
                ? "No site matches; check the spelling, or enter a new site."
                : "Type to search."}
          </li>
        ) : null}
      </ul>
      {near?.(searchNear)}
      <p className="sr-only" role="status" aria-live="polite">
        {open && !loading ? `${hits.length} site${hits.length === 1 ? "" : "s"} found` : ""}
      </p>
    </div>
  );
}
