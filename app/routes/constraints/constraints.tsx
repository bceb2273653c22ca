import { lazy, Suspense, useCallback, useEffect, useRef, useState } from "react";
import { getFormProps, getInputProps, getTextareaProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useFetcher, useNavigation } from "react-router";
import type { Route } from "./+types/constraints";
import { requireRole, requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import { SummedDensityPlot } from "#app/components/summed-density-plot.tsx";
import { getDb } from "#app/db/client.server.ts";
import { constraintFilterChoices } from "#app/models/registry/constraints.server.ts";
import { deleteSet, savedSets, saveSet } from "#app/models/releases/constraint-sets.server.ts";
import { nextVersion, publishRelease, PublishRefused } from "#app/models/releases/releases.server.ts";
import { knownCurveError } from "#app/models/releases/selection.server.ts";
import { selectionSummary, type SelectionSummary } from "#app/models/releases/selection-summary.server.ts";
import {
  CHECK_ORDER,
  FILTER_FLAGS,
  FILTER_KINDS,
  FILTER_METHODS,
  filterToParams,
  normaliseFormParams,
  parseConstraintFilter,
  parseConstraintFilterLenient,
  parseRegionGeoJson,
} from "#app/utils/constraint-filter.ts";
import { PublishSchema, SaveSetSchema } from "#app/utils/constraint-forms.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { CHECK_SEVERITY_LABELS, CONSTRAINT_KIND_LABELS, FLAG_LABELS, GRADE_WORDS, METHOD_LABELS } from "#app/utils/labels.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";

const RegionMap = lazy(() => import("#app/components/map/region-map.client.tsx"));

export const meta: Route.MetaFunction = () => [{ title: "Constraint sets · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const db = getDb();
  const { filter, errors } = parseConstraintFilterLenient(normaliseFormParams(new URL(request.url).searchParams));
  const { materials, curves } = constraintFilterChoices(db);
  return {
    query: filterToParams(filter).toString(),
    filter,
    errors,
    summary: selectionSummary(db, filter),
    materials,
    curves,
    sets: savedSets(db, user.id),
    canSave: user.roles.includes("modeller"),
    canPublish: user.roles.includes("editor"),
  };
}

type ActionResult = { intent: "save" | "publish"; result: SubmissionResult<string[]> };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const db = getDb();
  switch (intent) {
    case "save": {
      await requireRole(request, "modeller");
      const submission = parseWithZod(form, { schema: SaveSetSchema });
      if (submission.status !== "success")
        return data({ intent, result: submission.reply() } satisfies ActionResult, { status: 400 });
      const { name, filter } = submission.value;
      const parsed = parseConstraintFilter(new URLSearchParams(filter));
      saveSet(db, user.id, name, parsed.ok ? filterToParams(parsed.filter).toString() : "");
      return redirectWithFlash(`/constraints?${filter}`, { kind: "success", message: `Saved the set “${name}”.` });
    }
    case "delete": {
      await requireRole(request, "modeller");
      const ok = deleteSet(db, user.id, Number(form.get("id")));
      return redirectWithFlash(
        `/constraints?${String(form.get("filter") ?? "")}`,
        ok
          ? { kind: "info", message: "Deleted the saved set." }
          : { kind: "error", message: "That set is not yours or is gone." },
      );
    }
    case "publish": {
      await requireRole(request, "editor");
      const submission = parseWithZod(form, { schema: PublishSchema });
      if (submission.status !== "success")
        return data({ intent, result: submission.reply() } satisfies ActionResult, { status: 400 });
      const { name, version, description, filter: query } = submission.value;
      const parsed = parseConstraintFilter(new URLSearchParams(query));
      if (!parsed.ok) throw new Error("unreachable: the schema checked the filter");
      const refuse = (field: string, message: string) =>
        data({ intent, result: submission.reply({ fieldErrors: { [field]: [message] } }) } satisfies ActionResult, {
          status: 400,
        });
      const curveError = parsed.filter.curve ? knownCurveError(db, parsed.filter.curve) : null;
      if (curveError) return refuse("filter", `The filter cannot be used: ${curveError}.`);
      try {
        const r = publishRelease(db, {
          name,
          version: version || nextVersion(db, name),
          description: description ?? null,
          filter: parsed.filter,
          userId: user.id,
          baseUrl: `${new URL(request.url).origin}/releases/`,
        });
        return redirectWithFlash(`/releases/${r.slug}`, {
          kind: "success",
          message: `Published ${r.count.toLocaleString("en")} constraints.`,
        });
      } catch (e) {
        if (e instanceof PublishRefused) return refuse(e.field, e.message);
        throw e;
      }
    }
    default:
      return data({ intent, error: "Unknown action." }, { status: 400 });
  }
}

function formQuery(form: HTMLFormElement): string {
  const params = new URLSearchParams();
  for (const [k, v] of new FormData(form)) if (typeof v === "string") params.append(k, v);
  return filterToParams(parseConstraintFilterLenient(normaliseFormParams(params)).filter).toString();
}

export default function Constraints({ loaderData, actionData }: Route.ComponentProps) {
  const { filter, materials, curves, sets, canSave, canPublish, errors } = loaderData;
  const formRef = useRef<HTMLFormElement>(null);
  const summaryFetcher = useFetcher<SelectionSummary>();
  const [query, setQuery] = useState(loaderData.query);
  const [polygon, setPolygon] = useState<[number, number][]>(filter.polygon ?? []);
  const [uploadError, setUploadError] = useState<string | null>(null);
  const hydrated = useHydrated();
  const summary = summaryFetcher.data && "count" in summaryFetcher.data ? summaryFetcher.data : loaderData.summary;
  const loading = summaryFetcher.state !== "idle";
  const lastResult = (intent: ActionResult["intent"]) => {
    const a = actionData as Partial<ActionResult> | undefined;
    return a?.intent === intent ? a.result : undefined;
  };

  const refresh = useCallback(() => {
    if (!formRef.current) return;
    const q = formQuery(formRef.current);
    setQuery(q);
    window.history.replaceState(null, "", `/constraints${q ? `?${q}` : ""}`);
    summaryFetcher.load(`/constraints/summary${q ? `?${q}` : ""}`);
  }, [summaryFetcher]);

  // A vertex added on the map changes the hidden polygon field; refresh once React has written it.
  const polygonText = polygon.map(([x, y]) => `${x},${y}`).join(";");
  const first = useRef(true);
  useEffect(() => {
    if (first.current) {
      first.current = false;
      return;
    }
    if (polygon.length === 0 || polygon.length >= 3) refresh();
    // eslint-disable-next-line react-hooks/exhaustive-deps -- only a changed polygon refreshes; `refresh` and `polygon` change identity on every load of the summary
  }, [polygonText]);

  const addVertex = useCallback((p: [number, number]) => setPolygon((prev) => [...prev, p]), []);

  async function onUpload(file: File | undefined) {
    setUploadError(null);
    if (!file) return;
    if (file.size > 2 * 1024 * 1024) return setUploadError("The file is larger than 2 MB.");
    let body: unknown;
    try {
      body = JSON.parse(await file.text());
    } catch {
      return setUploadError("The file is not valid JSON.");
    }
    const region = parseRegionGeoJson(body);
    if (!region.ok) return setUploadError(region.error);
    const ring = region.geometry.type === "Polygon" ? region.geometry.coordinates[0]! : region.geometry.coordinates[0]![0]!;
    if (region.geometry.type === "MultiPolygon" && region.geometry.coordinates.length > 1) {
      setUploadError(
        "Only the first polygon of the MultiPolygon is used on this page; POST the file to the API to use all of them.",
      );
    }
    const open = ring.slice(0, -1).map(([x, y]) => [Math.round(x! * 1e5) / 1e5, Math.round(y! * 1e5) / 1e5] as [number, number]);
    setPolygon(open.slice(0, 1000));
  }

  const bbox = filter.bbox ?? null;
  const download = (format: string, extra = "") => `/constraints/download?${query ? `${query}&` : ""}format=${format}${extra}`;

  return (
    <div>
      <header>
        <h1>Constraint sets</h1>
        <p className="mt-1 max-w-3xl text-muted">
          Choose a region, a time window and the quality you need; the count, the map and the summed calendar density follow as
          you change the filter, and the address bar keeps the filter so you can share it.
        </p>
      </header>
      {errors.length > 0 ? (
        <p role="alert" className="card mt-4">
          Some parts of this address were not understood and were left out: {errors.join("; ")}
        </p>
      ) : null}

      <div className="mt-6 grid gap-6 lg:grid-cols-[22rem_1fr]">
        <Form
          ref={formRef}
          method="get"
          onChange={refresh}
          className="space-y-4"
          aria-label="Filter"
          data-testid="constraint-filter"
        >
          <fieldset className="card space-y-2">
            <legend className="label px-1">Region</legend>
            <label className="block">
              Bounding box W,S,E,N (degrees)
              <input
                name="bbox"
                defaultValue={bbox?.join(",") ?? ""}
                placeholder="e.g. -66,57,-60,60"
                className="input mt-1 w-full"
              />
            </label>
            <input type="hidden" name="polygon" value={polygonText} readOnly />
            <p className="text-sm text-muted" aria-live="polite">
              {polygon.length === 0
                ? "Or click the map to draw a polygon (three or more points)."
                : `Polygon: ${polygon.length} point${polygon.length === 1 ? "" : "s"}${polygon.length < 3 ? " — add more to use it" : ""}.`}
            </p>
            <div className="flex flex-wrap gap-2">
              <button type="button" className="btn-quiet" onClick={() => setPolygon([])} disabled={polygon.length === 0}>
                Clear region
              </button>
              <button
                type="button"
                className="btn-quiet"
                onClick={() => setPolygon((p) => p.slice(0, -1))}
                disabled={polygon.length === 0}
              >
                Undo last point
              </button>
            </div>
            <label className="block text-sm">
              Or upload a GeoJSON polygon
              <input
                type="file"
                accept=".json,.geojson,application/geo+json,application/json"
                onChange={(e) => void onUpload(e.target.files?.[0])}
                className="mt-1 block"
              />
            </label>
            {uploadError ? (
              <p role="alert" className="text-sm">
                {uploadError}
              </p>
            ) : null}
          </fieldset>

          <fieldset className="card space-y-2">
            <legend className="label px-1">Time window (cal BP)</legend>
            <div className="flex gap-2">
              <label className="flex-1">
                From
                <input
                  name="from_cal_bp"
                  type="number"
                  inputMode="numeric"
                  defaultValue={filter.from_cal_bp ?? ""}
                  className="input mt-1 w-full"
                />
              </label>
              <label className="flex-1">
                To
                <input
                  name="to_cal_bp"
                  type="number"
                  inputMode="numeric"
                  defaultValue={filter.to_cal_bp ?? ""}
                  className="input mt-1 w-full"
                />
              </label>
            </div>
            <label className="flex items-center gap-2">
              <input type="radio" name="time_mode" value="overlap" defaultChecked={filter.time_mode !== "median"} />
              95.4 % range overlaps the window
            </label>
            <label className="flex items-center gap-2">
              <input type="radio" name="time_mode" value="median" defaultChecked={filter.time_mode === "median"} />
              Median lies in the window
            </label>
          </fieldset>

          <fieldset className="card space-y-1">
            <legend className="label px-1">Quality</legend>
            <label className="block">
              Minimum grade
              <select name="min_grade" defaultValue={filter.min_grade ?? ""} className="input mt-1 w-full">
                <option value="">any, including ungraded</option>
                {[3, 2, 1, 0].map((g) => (
                  <option key={g} value={g}>
                    {g} {GRADE_WORDS[g]}
                    {g > 0 ? " or better" : " or better (graded only)"}
                  </option>
                ))}
              </select>
            </label>
            <label className="block">
              Worst check allowed
              <select name="worst_check" defaultValue={filter.worst_check ?? ""} className="input mt-1 w-full">
                <option value="">any</option>
                {CHECK_ORDER.map((c) => (
                  <option key={c} value={c}>
                    {c === "pass" ? "passed every check" : `${CHECK_SEVERITY_LABELS[c]} at worst`}
                  </option>
                ))}
              </select>
            </label>
            <details className="pt-1">
              <summary>Flags to exclude</summary>
              {FILTER_FLAGS.map((f) => (
                <label key={f} className="flex items-center gap-2 text-sm">
                  <input type="checkbox" name="exclude_flags" value={f} defaultChecked={filter.exclude_flags?.includes(f)} />
                  {FLAG_LABELS[f]}
                </label>
              ))}
            </details>
          </fieldset>

          <fieldset className="card space-y-1">
            <legend className="label px-1">What was dated</legend>
            <div className="flex flex-wrap gap-x-4">
              {FILTER_METHODS.map((m) => (
                <label key={m} className="flex items-center gap-2">
                  <input type="checkbox" name="methods" value={m} defaultChecked={filter.methods?.includes(m)} />
                  {METHOD_LABELS[m] ?? m}
                </label>
              ))}
            </div>
            <div className="flex flex-wrap gap-x-4">
              {FILTER_KINDS.map((k) => (
                <label key={k} className="flex items-center gap-2">
                  <input type="checkbox" name="kinds" value={k} defaultChecked={filter.kinds?.includes(k)} />
                  {CONSTRAINT_KIND_LABELS[k]}
                </label>
              ))}
            </div>
            <details>
              <summary>Materials</summary>
              {materials.map((m) => (
                <label key={m} className="flex items-center gap-2 text-sm">
                  <input type="checkbox" name="materials" value={m} defaultChecked={filter.materials?.includes(m)} />
                  {m}
                </label>
              ))}
            </details>
            <label className="block">
              Curve
              <select name="curve" defaultValue={filter.curve ?? ""} className="input mt-1 w-full">
                <option value="">any (luminescence has none)</option>
                {curves.map((c) => (
                  <option key={c} value={c}>
                    {c}
                  </option>
                ))}
              </select>
            </label>
          </fieldset>
          <noscript>
            <button type="submit" className="btn">
              Apply the filter
            </button>
          </noscript>
        </Form>

        <section aria-label="Selection" className="min-w-0 space-y-6">
          <div className="flex flex-wrap items-baseline justify-between gap-3">
            <p
              className={`text-2xl ${loading ? "opacity-60" : ""}`}
              aria-live="polite"
              data-testid="constraint-count"
              data-count={summary.count}
            >
              {summary.count.toLocaleString("en")} determination{summary.count === 1 ? "" : "s"} selected
            </p>
            <Link to="/constraints" reloadDocument className="text-sm">
              Clear all filters
            </Link>
          </div>
          <div>
            {hydrated ? (
              <Suspense fallback={<div className="card h-[420px]">Loading the map…</div>}>
                <RegionMap sites={summary.sites} polygon={polygon} bbox={bbox} onAddVertex={addVertex} />
              </Suspense>
            ) : (
              <div className="card h-[420px] text-muted">
                The map needs JavaScript in the browser; the bounding box works without it.
              </div>
            )}
          </div>
          <div>
            <h2>Summed calendar density, by grade</h2>
            <SummedDensityPlot density={summary.density} />
          </div>

          <div className="card" data-testid="downloads">
            <h2>Download exactly this selection</h2>
            <ul className="mt-2 space-y-1">
              <li>
                <a href={download("csv")} download data-testid="download-csv">
                  CSV
                </a>{" "}
                — one row per determination; keep the{" "}
                <a href={download("metadata")} download>
                  metadata file
                </a>{" "}
                (filter, curves, time of export, publications to cite) beside it.
              </li>
              <li>
                <a href={download("geojson")} download>
                  GeoJSON
                </a>{" "}
                — points with the same properties and the metadata.
              </li>
              <li>
                <a href={download("json")} download>
                  JSON
                </a>{" "}
                or{" "}
                <a href={download("json", "&densities=true")} download>
                  JSON with the full calendar densities
                </a>
                .
              </li>
            </ul>
            <p className="mt-2 text-sm text-muted">
              A download reflects the registry now; to cite a set that never changes, use a <Link to="/releases">release</Link>.
            </p>
          </div>

          <SavedSets sets={sets} canSave={canSave} query={query} lastResult={lastResult("save")} />
          {canPublish ? <PublishForm query={query} count={summary.count} lastResult={lastResult("publish")} /> : null}
        </section>
      </div>
    </div>
  );
}

type LastResult = SubmissionResult<string[]> | undefined;

function SavedSets({
  sets,
  canSave,
  query,
  lastResult,
}: {
  sets: { id: number; name: string; filter: string }[];
  canSave: boolean;
  query: string;
  lastResult: LastResult;
}) {
  return (
    <div className="card">
      <h2>Saved sets</h2>
      {sets.length === 0 ? (
        <p className="text-muted">
          {canSave ? "No saved sets yet: name the filter below to come back to it." : "No saved sets yet."}
        </p>
      ) : null}
      <ul className="mt-2 space-y-1">
        {sets.map((s) => (
          <li key={s.id} className="flex items-center gap-3">
            <a href={`/constraints?${s.filter}`}>{s.name}</a>
            {canSave ? (
              <Form method="post">
                <input type="hidden" name="intent" value="delete" />
                <input type="hidden" name="id" value={s.id} />
                <input type="hidden" name="filter" value={query} />
                <button className="btn-quiet text-sm" type="submit" aria-label={`Delete the saved set ${s.name}`}>
                  Delete
                </button>
              </Form>
            ) : null}
          </li>
        ))}
      </ul>
      {canSave ? (
        <SaveForm query={query} lastResult={lastResult} />
      ) : (
        <p className="mt-2 text-sm text-muted">Modellers can save filters here to return to.</p>
      )}
    </div>
  );
}

function SaveForm({ query, lastResult }: { query: string; lastResult: LastResult }) {
  const [form, fields] = useForm({
    id: "save-set",
    lastResult,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: SaveSetSchema }),
  });
  const busy = useBusy("save");
  return (
    <Form method="post" {...getFormProps(form)} className="mt-3 space-y-2">
      <input type="hidden" name="intent" value="save" />
      <input type="hidden" name={fields.filter.name} value={query} />
      <div className="flex flex-wrap items-end gap-2">
        <div className="field">
          <label htmlFor={fields.name.id}>Save this filter as</label>
          <input {...getInputProps(fields.name, { type: "text" })} maxLength={120} className="input" autoComplete="off" />
        </div>
        <button type="submit" className="btn" disabled={busy}>
          {busy ? "Saving…" : "Save set"}
        </button>
      </div>
      <FieldErrors id={fields.name.errorId} errors={fields.name.errors} />
      <FieldErrors id={fields.filter.errorId} errors={fields.filter.errors} />
    </Form>
  );
}

/** Whether this page's form with this intent is being sent. */
function useBusy(intent: string): boolean {
  const navigation = useNavigation();
  return navigation.state !== "idle" && navigation.formData?.get("intent") === intent;
}

function PublishForm({ query, count, lastResult }: { query: string; count: number; lastResult: LastResult }) {
  const [form, fields] = useForm({
    id: "publish-release",
    lastResult,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: PublishSchema }),
  });
  const busy = useBusy("publish");
  return (
    <Form method="post" {...getFormProps(form)} className="card space-y-3" data-testid="publish-form">
      <h2>Publish as a release</h2>
      <p className="text-sm text-muted">
        Freezes the {count.toLocaleString("en")} selected determination{count === 1 ? "" : "s"} as they are now, with a checksum
        and a citation. A release never changes afterwards.
      </p>
      <input type="hidden" name="intent" value="publish" />
      <input type="hidden" name={fields.filter.name} value={query} />
      <div className="field">
        <label htmlFor={fields.name.id}>Name</label>
        <input {...getInputProps(fields.name, { type: "text" })} maxLength={200} className="input w-full" autoComplete="off" />
        <FieldErrors id={fields.name.errorId} errors={fields.name.errors} />
      </div>
      <div className="field">
        <label htmlFor={fields.version.id}>
          Version <span className="text-muted">(left empty: the next number for this name)</span>
        </label>
        <input {...getInputProps(fields.version, { type: "text" })} maxLength={40} className="input w-full" autoComplete="off" />
        <FieldErrors id={fields.version.errorId} errors={fields.version.errors} />
      </div>
      <div className="field">
        <label htmlFor={fields.description.id}>Description</label>
        <textarea {...getTextareaProps(fields.description)} rows={3} maxLength={2000} className="input w-full" />
        <FieldErrors id={fields.description.errorId} errors={fields.description.errors} />
      </div>
      <FieldErrors id={fields.filter.errorId} errors={fields.filter.errors} />
      <FieldErrors id={form.errorId} errors={form.errors} />
      {count === 0 ? <p className="text-sm">The filter selects nothing; a release cannot be empty.</p> : null}
      <button type="submit" className="btn" disabled={count === 0 || busy}>
        {busy ? "Publishing…" : "Publish release"}
      </button>
    </Form>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}
