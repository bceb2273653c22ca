import { lazy, Suspense, useCallback, useMemo, useState } from "react";
import { Link } from "react-router";
import type { Route } from "./+types/release";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { releaseDiff, type ReleaseDiff } from "#app/models/releases/release-diff.server.ts";
import { releaseById, releaseBySlug, releaseItems } from "#app/models/releases/releases.server.ts";
import { formatYears } from "#app/utils/age-format.ts";
import { notFound } from "#app/utils/http.server.ts";
import { CHECK_SEVERITY_LABELS, CONSTRAINT_KIND_LABELS, FLAG_LABELS, gradeWord, METHOD_LABELS } from "#app/utils/labels.ts";
import type { MapSite } from "#app/utils/map-site.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";
import { formatDay } from "#app/utils/time-format.ts";
import { PublicationCitation } from "#app/components/publication-citation.tsx";

const SiteMap = lazy(() => import("#app/components/map/site-map.client.tsx"));

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.release.name ?? "Release"} · Thawline` }];

export async function loader({ params }: Route.LoaderArgs) {
  // Public: published releases are open data.
  const db = getDb();
  const release = releaseBySlug(db, params.slug);
  if (!release) notFound(`There is no release “${params.slug}”.`);
  const items = releaseItems(db, release.id);
  const bySite = new Map<number, MapSite & { ages: number[] }>();
  for (const i of items) {
    const s = bySite.get(i.site_id) ?? {
      id: i.site_id,
      name: i.site_name,
      lat: i.latitude,
      lon: i.longitude,
      n: 0,
      min: null,
      med: null,
      grade: null,
      ages: [],
    };
    s.n++;
    if (i.constraint_kind !== "maximum") s.ages.push(i.median_cal_bp);
    if (i.grade != null && (s.grade == null || i.grade > s.grade)) s.grade = i.grade;
    bySite.set(i.site_id, s);
  }
  const sites: MapSite[] = [...bySite.values()].map(({ ages, ...s }) => {
    ages.sort((a, b) => a - b);
    return { ...s, min: ages[0] ?? null, med: ages.length ? ages[Math.floor(ages.length / 2)]! : null };
  });
  const previous = release.previousReleaseId ? releaseById(db, release.previousReleaseId) : null;
  const diff = previous ? releaseDiff(db, previous.id, release.id) : null;
  const publications = new Map<string, { citation: string; doi: string | null; count: number }>();
  for (const i of items) {
    if (!i.publication) continue;
    const key = i.publication.citation;
    const p = publications.get(key) ?? { ...i.publication, count: 0 };
    p.count++;
    publications.set(key, p);
  }
  return {
    release,
    sites,
    previous: previous ? { slug: previous.slug, name: previous.name, version: previous.version } : null,
    diff,
    publications: [...publications.values()].sort((a, b) => a.citation.localeCompare(b.citation)),
  };
}

export default function ReleasePage({ loaderData }: Route.ComponentProps) {
  const { release, sites, previous, diff, publications } = loaderData;
  const api = `/api/v1/releases/${release.slug}`;
  return (
    <div className="space-y-6">
      <header>
        <p className="label">
          <Link to="/releases">Releases</Link>
        </p>
        <h1 data-testid="release-name">
          {release.name} <span className="text-muted">version {release.version}</span>
        </h1>
        {release.description ? <p className="mt-1 max-w-3xl">{release.description}</p> : null}
        <p className="mt-1 text-muted">
          {release.itemCount.toLocaleString("en")} constraints · published {formatDay(release.publishedAt)} by{" "}
          {release.publishedBy}
        </p>
      </header>

      <section className="card" aria-labelledby="cite">
        <h2 id="cite">How to cite</h2>
        <p className="mt-1" data-testid="release-citation">
          {release.citation}
        </p>
        <p className="mt-2 text-sm">
          SHA-256 ({release.checksumRule}):{" "}
          <code className="break-all" data-testid="release-checksum">
            {release.checksum}
          </code>
        </p>
        <p className="mt-1 text-sm text-muted">
          Recompute it from the JSON download by the rule described at{" "}
          <Link to="/api-docs#release-checksum">the API documentation</Link>.
        </p>
      </section>

      <section className="card" aria-labelledby="downloads">
        <h2 id="downloads">Downloads</h2>
        <ul className="mt-2 space-y-1">
          <li>
            <a href={`${api}?format=csv`} download data-testid="release-csv">
              CSV
            </a>{" "}
            with its{" "}
            <a href={`${api}?format=metadata`} download>
              metadata file
            </a>
          </li>
          <li>
            <a href={`${api}?format=geojson`} download>
              GeoJSON
            </a>
          </li>
          <li>
            <a href={`${api}?format=json`} download>
              JSON
            </a>{" "}
            ·{" "}
            <a href={`${api}?format=json&densities=true`} download>
              JSON with calendar densities
            </a>
          </li>
        </ul>
        <p className="mt-2 text-sm text-muted">The same files, byte for byte, every time they are downloaded.</p>
      </section>

      <ReleaseMap sites={sites} />

      <section aria-labelledby="diff" className="card">
        <h2 id="diff">Changes from the previous release</h2>
        {previous && diff ? (
          <DiffView previous={previous} diff={diff} />
        ) : (
          <p>This is the first release; there is nothing to compare with.</p>
        )}
      </section>

      <section aria-labelledby="filter" className="card">
        <h2 id="filter">Filter</h2>
        <dl className="mt-1 grid grid-cols-[12rem_1fr] gap-x-4 text-sm">
          {Object.entries(release.filter).length === 0 ? (
            <dd>the whole registry (every current, calibrated determination)</dd>
          ) : null}
          {Object.entries(release.filter).map(([k, v]) => (
            <div key={k} className="contents">
              <dt className="font-semibold">{FILTER_WORDS[k] ?? k}</dt>
              <dd className="break-all">{filterValueWords(k, v)}</dd>
            </div>
          ))}
        </dl>
        <h3 className="mt-3">Curves</h3>
        <ul className="text-sm">
          {release.curves.map((c) => (
            <li key={c.curve + (c.version ?? "")}>
              {c.curve}
              {c.version ? ` (${c.version})` : ""}: {c.count.toLocaleString("en")} {c.citation ? `— ${c.citation}` : ""}
            </li>
          ))}
        </ul>
        <h3 className="mt-3">Publications to cite</h3>
        <ul className="text-sm">
          {publications.map((p) => (
            <li key={p.citation}>
              <PublicationCitation publication={p} /> ({p.count.toLocaleString("en")})
            </li>
          ))}
        </ul>
      </section>
    </div>
  );
}

function DiffList<T extends { id: number; lab_code: string; site_name: string }>({
  title,
  rows,
  detail,
}: {
  title: string;
  rows: T[];
  detail?: (r: T) => string;
}) {
  return (
    <details className="mt-2" data-testid={`diff-${title.toLowerCase()}`}>
      <summary>
        {title}: {rows.length.toLocaleString("en")}
      </summary>
      <ul className="ml-4 text-sm">
        {rows.slice(0, 500).map((r) => (
          <li key={r.id}>
            {r.lab_code} at {r.site_name}
            {detail ? ` — ${detail(r)}` : ""}
          </li>
        ))}
        {rows.length > 500 ? <li>… and {rows.length - 500} more (compare the JSON downloads for the full list)</li> : null}
      </ul>
    </details>
  );
}

function DiffView({ previous, diff }: { previous: { slug: string; name: string; version: string }; diff: ReleaseDiff }) {
  return (
    <div>
      <p>
        Compared with{" "}
        <Link to={`/releases/${previous.slug}`}>
          {previous.name} version {previous.version}
        </Link>
        : {diff.unchanged.toLocaleString("en")} unchanged.
      </p>
      <DiffList title="Added" rows={diff.added} />
      <DiffList title="Removed" rows={diff.removed} />
      <DiffList
        title="Regraded"
        rows={diff.regraded}
        detail={(r) => `${r.from ?? "–"} ${gradeWord(r.from)} → ${r.to ?? "–"} ${gradeWord(r.to)}`}
      />
      <DiffList
        title="Recalibrated"
        rows={diff.recalibrated}
        detail={(r) =>
          `median ${formatYears(r.from_median)} → ${formatYears(r.to_median)} cal BP${r.from_curve !== r.to_curve ? ` (${r.from_curve} → ${r.to_curve})` : ""}`
        }
      />
    </div>
  );
}

function ReleaseMap({ sites }: { sites: MapSite[] }) {
  const hydrated = useHydrated();
  const ages = sites.flatMap((s) => (s.med != null ? [s.med] : [])).sort((a, b) => a - b);
  const domain = useMemo<[number, number]>(
    () =>
      ages.length
        ? [
            Math.floor(ages[Math.floor(ages.length * 0.02)]! / 50) * 50,
            Math.ceil(ages[Math.floor(ages.length * 0.98)]! / 50) * 50,
          ]
        : [0, 15000],
    // eslint-disable-next-line react-hooks/exhaustive-deps -- `ages` is derived from `sites` on every render; the domain changes only with the sites
    [sites],
  );
  const [time, setTime] = useState(domain[1]);
  const onReady = useCallback(() => {}, []);
  const iceFree = sites.filter((s) => s.med != null && s.med >= time).length;
  return (
    <section aria-labelledby="map" className="space-y-2">
      <h2 id="map">The land becoming free of ice</h2>
      <label className="block">
        <span className="label">Time: {formatYears(time)} cal BP</span>
        <input
          type="range"
          min={-domain[1]}
          max={-domain[0]}
          step={50}
          value={-time}
          onChange={(e) => setTime(-Number(e.target.value))}
          className="w-full"
          aria-valuetext={`${formatYears(time)} cal BP`}
          data-testid="release-time"
        />
      </label>
      <p className="text-sm text-muted" aria-live="polite">
        {iceFree} of {sites.length} sites dated free of ice by {formatYears(time)} cal BP (filled); the others are drawn hollow.
      </p>
      {hydrated ? (
        <Suspense fallback={<div className="card h-[420px]">Loading the map…</div>}>
          <SiteMap
            sites={sites}
            isochrones={null}
            showIsochrones={false}
            colourBy="age"
            time={time}
            highlightAge={null}
            ageDomain={domain}
            onReady={onReady}
            linkSites={false}
          />
        </Suspense>
      ) : (
        <div className="card h-[420px] text-muted">The map needs JavaScript in the browser.</div>
      )}
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

/** The filter's parameters in words (the API names stay in the downloads' metadata). */
const FILTER_WORDS: Record<string, string> = {
  bbox: "Region (W,S,E,N degrees)",
  polygon: "Region (polygon)",
  geometry: "Region (uploaded polygon)",
  from_cal_bp: "Time window from",
  to_cal_bp: "Time window to",
  time_mode: "Time window rule",
  methods: "Methods",
  materials: "Materials",
  kinds: "Constraint kinds",
  min_grade: "Minimum grade",
  exclude_flags: "Flags excluded",
  worst_check: "Worst check allowed",
  curve: "Curve",
};

function filterValueWords(key: string, value: unknown): string {
  if (typeof value !== "string") return JSON.stringify(value);
  const list = (labels: Record<string, string>) =>
    value
      .split(",")
      .map((v) => labels[v] ?? v)
      .join(", ");
  switch (key) {
    case "from_cal_bp":
    case "to_cal_bp":
      return `${Number(value).toLocaleString("en")} cal BP`;
    case "time_mode":
      return value === "median" ? "the median lies in the window" : "the 95.4 % range overlaps the window";
    case "min_grade":
      return `${value} (${gradeWord(Number(value))}) or better`;
    case "methods":
      return list(METHOD_LABELS);
    case "kinds":
      return list(CONSTRAINT_KIND_LABELS);
    case "exclude_flags":
      return list(FLAG_LABELS);
    case "worst_check":
      return value === "pass" ? "passed every check" : `${CHECK_SEVERITY_LABELS[value] ?? value} at worst`;
    case "polygon":
      return `${value.split(";").length} points: ${value}`;
    default:
      return value;
  }
}
