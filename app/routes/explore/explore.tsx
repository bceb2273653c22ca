import { useEffect, useRef } from "react";
import { Form, Link, useLocation, useNavigation, useSubmit } from "react-router";
import type { Route } from "./+types/explore";
import type { LaneHandle } from "#app/utils/page-lane.server.ts";
import { Pagination } from "#app/components/ui/pagination.tsx";
import { cachedRead } from "#app/models/registry/read-cache.server.ts";
import { requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { CheckBadge } from "#app/components/check-badge.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { getDb } from "#app/db/client.server.ts";
import {
  exploreDeterminations,
  exploreFilterOptions,
  parseExploreFilters,
  type ExploreRow,
} from "#app/models/registry/query.server.ts";
import { formatCal, formatCalRange, formatMeasuredAge } from "#app/utils/age-format.ts";
import { defaultDirection, exploreSearch, type ExploreSort } from "#app/utils/explore-filters.ts";
import { CONSTRAINT_KIND_LABELS, methodWords, SIGNAL_LABELS, STATUS_LABELS } from "#app/utils/labels.ts";
import { formatDay } from "#app/utils/time-format.ts";

/** The page shows the registry as the signed-in person may see it, and nothing else: it may take the lane (page-lane.server.ts). */
export const handle = { fastLane: true } satisfies LaneHandle;

export const meta: Route.MetaFunction = () => [{ title: "Explore determinations · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const filters = parseExploreFilters(new URL(request.url).searchParams);
  const db = getDb();
  return {
    filters,
    result: cachedRead(db, `explore:${JSON.stringify(filters)}`, () => exploreDeterminations(db, filters)),
    options: cachedRead(db, "explore-options", () => exploreFilterOptions(db)),
  };
}

type Filters = Route.ComponentProps["loaderData"]["filters"];

/** Filter inputs that are not part of the sort or the page. */
const FILTER_KEYS = [
  "q",
  "method",
  "material",
  "lab",
  "site",
  "kind",
  "status",
  "grade",
  "worst_check",
  "ageFrom",
  "ageTo",
  "c14From",
  "c14To",
  "lumFrom",
  "lumTo",
  "calFrom",
  "calTo",
];

export default function Explore({ loaderData }: Route.ComponentProps) {
  const { filters, result, options } = loaderData;
  const navigation = useNavigation();
  const loading = navigation.state === "loading" && navigation.location?.pathname === "/explore";
  const hasFilters = FILTER_KEYS.some((k) => (filters as Record<string, unknown>)[k] !== undefined);
  const first = (result.page - 1) * result.pageSize + 1;
  const last = Math.min(result.total, result.page * result.pageSize);

  return (
    <div>
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1>Explore determinations</h1>
          <p className="mt-1 text-muted" aria-live="polite" data-testid="explore-total">
            {result.total === 0
              ? "No determinations match these filters."
              : `${result.total.toLocaleString("en")} determination${result.total === 1 ? "" : "s"}${hasFilters ? " match these filters" : ""}; showing ${first.toLocaleString("en")}–${last.toLocaleString("en")}.`}
          </p>
        </div>
      </header>

      <FilterForm filters={filters} options={options} hasFilters={hasFilters} />

      {result.total === 0 ? (
        <div className="card mt-8 text-center" data-testid="explore-empty">
          <p className="text-lg">No determinations match these filters.</p>
          <p className="mt-2">
            <Link to="/explore">Clear all filters</Link> or widen the age windows.
          </p>
        </div>
      ) : (
        <>
          <div className={`relative mt-6 overflow-x-auto transition-opacity ${loading ? "opacity-60" : ""}`} aria-busy={loading}>
            <table className="data-table text-[14px] [&_td]:px-2 [&_th]:px-2" data-testid="explore-table">
              <caption className="sr-only">
                Determinations, page {result.page} of {result.pageCount}, sorted by {SORT_LABELS[filters.sort]}
              </caption>
              <thead>
                <tr>
                  <SortHeader filters={filters} sort="labCode">
                    Lab code
                  </SortHeader>
                  <SortHeader filters={filters} sort="site">
                    Site
                  </SortHeader>
                  <th scope="col">Material</th>
                  <th scope="col">Method</th>
                  <SortHeader filters={filters} sort="age" numeric>
                    Measured age
                  </SortHeader>
                  <SortHeader filters={filters} sort="cal" numeric>
                    Median (cal BP)
                  </SortHeader>
                  <th scope="col" className="text-right">
                    95.4 % range (cal BP)
                  </th>
                  <th scope="col">Constraint</th>
                  <SortHeader filters={filters} sort="grade">
                    Grade
                  </SortHeader>
                  <th scope="col">Worst check</th>
                  <th scope="col">Status</th>
                  <SortHeader filters={filters} sort="created">
                    Added
                  </SortHeader>
                </tr>
              </thead>
              <tbody>
                {result.rows.map((row) => (
                  <ResultRow key={row.id} row={row} />
                ))}
              </tbody>
            </table>
          </div>
          <div className="mt-6">
            <Pagination
              page={result.page}
              pageCount={result.pageCount}
              href={(p) => exploreSearch(filters, { page: p })}
              testId="explore-pages"
            />
          </div>
        </>
      )}
    </div>
  );
}

const SORT_LABELS: Record<ExploreSort, string> = {
  labCode: "lab code",
  site: "site",
  age: "measured age",
  cal: "calibrated median",
  grade: "grade",
  created: "date added",
};

function ResultRow({ row }: { row: ExploreRow }) {
  return (
    <tr>
      <td className="whitespace-nowrap">
        <Link to={`/determinations/${row.id}`}>{row.labCode}</Link>
      </td>
      <td className="min-w-40">
        <Link to={`/sites/${row.siteId}`}>{row.siteName}</Link>
      </td>
      <td>{row.material}</td>
      <td className="whitespace-nowrap" title={row.signal ? (SIGNAL_LABELS[row.signal] ?? row.signal) : undefined}>
        {methodWords(row.method, row.signal)}
      </td>
      <td className="text-right whitespace-nowrap">{formatMeasuredAge(row)}</td>
      <td className="text-right whitespace-nowrap">{formatCal(row.medianCalBp)}</td>
      <td className="text-right whitespace-nowrap">
        {formatCalRange(row.hpd95FromBp, row.hpd95ToBp)}
        {row.hpd95Parts > 1 ? (
          <span className="ml-1 text-xs text-muted" title="The 95.4 % range is split; the determination page lists each part.">
            in {row.hpd95Parts} parts
          </span>
        ) : null}
      </td>
      <td className="whitespace-nowrap">
        <abbr title={CONSTRAINT_KIND_LABELS[row.constraintKind]} className="no-underline">
          {row.constraintKind}
        </abbr>
      </td>
      <td>
        <GradeBadge grade={row.grade} />
      </td>
      <td>
        <CheckBadge severity={row.worstCheck} />
      </td>
      <td className="whitespace-nowrap">{STATUS_LABELS[row.status]}</td>
      <td className="whitespace-nowrap text-muted">{formatDay(row.createdAt)}</td>
    </tr>
  );
}

function SortHeader({
  filters,
  sort,
  numeric,
  children,
}: {
  filters: Filters;
  sort: ExploreSort;
  numeric?: boolean;
  children: React.ReactNode;
}) {
  const active = filters.sort === sort;
  const dir = filters.dir ?? defaultDirection(filters.sort);
  const nextDir = active ? (dir === "asc" ? "desc" : "asc") : defaultDirection(sort);
  return (
    <th
      scope="col"
      className={numeric ? "text-right" : undefined}
      aria-sort={active ? (dir === "asc" ? "ascending" : "descending") : "none"}
    >
      <Link
        to={exploreSearch(filters, { sort, dir: nextDir === defaultDirection(sort) ? undefined : nextDir, page: 1 })}
        className="text-ink no-underline hover:underline"
        preventScrollReset
      >
        {children}
        <span aria-hidden="true" className={`ml-1 text-xs ${active ? "text-accent" : "text-muted/60"}`}>
          {active ? (dir === "asc" ? "▲" : "▼") : "↕"}
        </span>
        <span className="sr-only">
          {active ? `, sorted ${dir === "asc" ? "ascending" : "descending"}; ` : ", "}sort{" "}
          {nextDir === "asc" ? "ascending" : "descending"}
        </span>
      </Link>
    </th>
  );
}

/** A from–to pair of number fields under one legend (the scale is in the legend, once). */
function RangeFields({
  legend,
  name,
  from,
  to,
  what,
  step,
}: {
  legend: string;
  name: string;
  from: number | undefined;
  to: number | undefined;
  what: string;
  step?: string;
}) {
  return (
    <fieldset className="sm:col-span-1 lg:col-span-2">
      <legend className="label">{legend}</legend>
      <div className="mt-1 flex items-center gap-2">
        <label htmlFor={`f-${name}-from`} className="sr-only">
          {what} from
        </label>
        <input
          id={`f-${name}-from`}
          name={`${name}From`}
          type="number"
          inputMode="decimal"
          step={step}
          className="input w-full"
          defaultValue={from ?? ""}
          placeholder="from"
        />
        <span aria-hidden="true">–</span>
        <label htmlFor={`f-${name}-to`} className="sr-only">
          {what} to
        </label>
        <input
          id={`f-${name}-to`}
          name={`${name}To`}
          type="number"
          inputMode="decimal"
          step={step}
          className="input w-full"
          defaultValue={to ?? ""}
          placeholder="to"
        />
      </div>
    </fieldset>
  );
}

function FilterForm({
  filters,
  options,
  hasFilters,
}: {
  filters: Filters;
  options: Route.ComponentProps["loaderData"]["options"];
  hasFilters: boolean;
}) {
  const submit = useSubmit();
  const formRef = useRef<HTMLFormElement>(null);
  const location = useLocation();

  // The inputs are uncontrolled (so the form works without JS); when the URL changes by another
  // route (back button, "clear", a sort link) bring them in line without re-mounting, so focus stays put.
  useEffect(() => {
    const form = formRef.current;
    if (!form) return;
    const params = new URLSearchParams(location.search);
    for (const key of FILTER_KEYS) {
      const el = form.elements.namedItem(key);
      if (el instanceof HTMLInputElement || el instanceof HTMLSelectElement) el.value = params.get(key) ?? "";
    }
  }, [location.search]);

  const autoSubmit = (event: React.ChangeEvent<HTMLSelectElement>) => {
    if (event.currentTarget.form) submit(event.currentTarget.form, { preventScrollReset: true });
  };

  const str = (v: unknown) => (v === undefined || v === null ? "" : String(v));

  return (
    <Form
      ref={formRef}
      method="get"
      action="/explore"
      role="search"
      aria-label="Filter determinations"
      className="card mt-6 grid gap-x-4 gap-y-3 sm:grid-cols-2 lg:grid-cols-6"
      preventScrollReset
    >
      <div className="field sm:col-span-2">
        <label htmlFor="f-q">Lab code or site name</label>
        <input
          id="f-q"
          name="q"
          type="search"
          className="input"
          defaultValue={str(filters.q)}
          placeholder="part of a lab code or site name"
        />
      </div>
      <div className="field">
        <label htmlFor="f-method">Method</label>
        <select id="f-method" name="method" className="input" defaultValue={str(filters.method)} onChange={autoSubmit}>
          <option value="">All methods</option>
          <option value="radiocarbon">Radiocarbon</option>
          <option value="luminescence">Luminescence</option>
          <option value="exposure">Exposure</option>
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-material">Material</label>
        <select id="f-material" name="material" className="input" defaultValue={str(filters.material)} onChange={autoSubmit}>
          <option value="">All materials</option>
          {options.materials.map((m) => (
            <option key={m} value={m}>
              {m}
            </option>
          ))}
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-lab">Lab</label>
        <select id="f-lab" name="lab" className="input" defaultValue={str(filters.lab)} onChange={autoSubmit}>
          <option value="">All labs</option>
          {options.labs.map((l) => (
            <option key={l.id} value={l.id}>
              {l.name} ({l.codePrefix})
            </option>
          ))}
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-site">Site name contains</label>
        <input id="f-site" name="site" type="text" className="input" defaultValue={str(filters.site)} />
      </div>
      <div className="field">
        <label htmlFor="f-kind">Constraint kind</label>
        <select id="f-kind" name="kind" className="input" defaultValue={str(filters.kind)} onChange={autoSubmit}>
          <option value="">All kinds</option>
          {Object.entries(CONSTRAINT_KIND_LABELS).map(([v, label]) => (
            <option key={v} value={v}>
              {label}
            </option>
          ))}
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-status">Status</label>
        <select id="f-status" name="status" className="input" defaultValue={str(filters.status)} onChange={autoSubmit}>
          <option value="">Not withdrawn</option>
          {Object.entries(STATUS_LABELS).map(([v, label]) => (
            <option key={v} value={v}>
              {label}
            </option>
          ))}
          <option value="all">All, including withdrawn</option>
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-grade">Grade</label>
        <select id="f-grade" name="grade" className="input" defaultValue={str(filters.grade)} onChange={autoSubmit}>
          <option value="">Any</option>
          <option value="3">3 secure</option>
          <option value="2">2 usable or better</option>
          <option value="1">1 doubtful or better</option>
          <option value="0">Any grade (graded only)</option>
          <option value="ungraded">Ungraded</option>
        </select>
      </div>
      <div className="field">
        <label htmlFor="f-worst-check">Worst check</label>
        <select
          id="f-worst-check"
          name="worst_check"
          className="input"
          defaultValue={str(filters.worst_check)}
          onChange={autoSubmit}
        >
          <option value="">Any</option>
          <option value="conflict">conflict</option>
          <option value="warning">warning</option>
          <option value="note">note</option>
          <option value="pass">pass (all checks)</option>
        </select>
      </div>
      <RangeFields
        legend="Radiocarbon age, ¹⁴C yr BP"
        name="c14"
        from={filters.c14From}
        to={filters.c14To}
        what="Radiocarbon age"
      />
      <RangeFields
        legend="Luminescence age, ka"
        name="lum"
        from={filters.lumFrom}
        to={filters.lumTo}
        what="Luminescence age"
        step="any"
      />
      <fieldset className="sm:col-span-1 lg:col-span-2">
        <legend className="label">Calibrated median, cal BP</legend>
        <div className="mt-1 flex items-center gap-2">
          <label htmlFor="f-cal-from" className="sr-only">
            Calibrated median from (cal BP)
          </label>
          <input
            id="f-cal-from"
            name="calFrom"
            type="number"
            inputMode="numeric"
            className="input w-full"
            defaultValue={str(filters.calFrom)}
            placeholder="from"
          />
          <span aria-hidden="true">–</span>
          <label htmlFor="f-cal-to" className="sr-only">
            Calibrated median to (cal BP)
          </label>
          <input
            id="f-cal-to"
            name="calTo"
            type="number"
            inputMode="numeric"
            className="input w-full"
            defaultValue={str(filters.calTo)}
            placeholder="to"
          />
        </div>
      </fieldset>
      {/* Keep the chosen order when filters change; the page starts again at 1. */}
      {filters.sort !== "created" ? <input type="hidden" name="sort" value={filters.sort} /> : null}
      {filters.dir ? <input type="hidden" name="dir" value={filters.dir} /> : null}
      <div className="flex items-end gap-3 sm:col-span-2 lg:col-span-2">
        <button type="submit" className="btn">
          Apply filters
        </button>
        {hasFilters ? (
          <Link to="/explore" className="btn-quiet">
            Clear filters
          </Link>
        ) : null}
      </div>
    </Form>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}
