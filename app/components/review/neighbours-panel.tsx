import { lazy, Suspense, useCallback, useMemo } from "react";
import { Link, useNavigate } from "react-router";
import type { ReviewNeighbourhood } from "#app/models/review/neighbours.server.ts";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { formatCal, formatCalRange } from "#app/utils/age-format.ts";
import { CONSTRAINT_KIND_LABELS, gradeWord } from "#app/utils/labels.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";

// Leaflet needs `window`: the map is a browser-only module loaded after hydration.
const NeighbourMap = lazy(() => import("#app/components/map/neighbour-map.client.tsx"));

/** How many of the nearest neighbours the table lists (the map shows them all). */
const TABLE_ROWS = 12;

/**
 * The neighbours of the determination under review: a small map (the check's radius round the
 * site) and a table of the nearest with their ages. The table is server-rendered, so the ages are
 * there before (and without) the map.
 */
export function NeighboursPanel({ hood, labCode }: { hood: ReviewNeighbourhood; labCode: string }) {
  const hydrated = useHydrated();
  const navigate = useNavigate();
  const onOpen = useCallback((id: number) => navigate(`/determinations/${id}`), [navigate]);
  const marks = useMemo(
    () =>
      hood.neighbours.map((n) => ({
        id: n.id,
        labCode: n.labCode,
        latitude: n.latitude,
        longitude: n.longitude,
        medianCalBp: n.medianCalBp,
        maximum: n.constraintKind === "maximum",
        label:
          `${n.labCode}: ` +
          (n.medianCalBp != null ? `${formatCal(n.medianCalBp)} cal BP` : "no calendar age") +
          `, ${CONSTRAINT_KIND_LABELS[n.constraintKind] ?? n.constraintKind}, grade ${n.grade ?? "–"} ${gradeWord(n.grade)}, ${n.km.toFixed(1)} km`,
      })),
    [hood.neighbours],
  );
  const ageDomain = useMemo<[number, number]>(() => {
    const ages = hood.neighbours.flatMap((n) => (n.medianCalBp != null ? [n.medianCalBp] : []));
    return ages.length ? [Math.min(...ages), Math.max(...ages)] : [0, 1];
  }, [hood.neighbours]);
  const centre = useMemo(
    () => ({ latitude: hood.centre.latitude, longitude: hood.centre.longitude, label: `${labCode} (${hood.centre.siteName})` }),
    [hood.centre, labCode],
  );
  const shown = hood.neighbours.slice(0, TABLE_ROWS);
  return (
    <section className="card" aria-labelledby="neighbours-heading">
      <h2 id="neighbours-heading">Neighbours within {hood.radiusKm} km</h2>
      {hood.total === 0 ? (
        <p className="mt-2 text-muted">No other determination lies within {hood.radiusKm} km of this site.</p>
      ) : (
        <>
          <p className="mt-1 text-sm text-muted">
            {hood.total} determination{hood.total === 1 ? "" : "s"} within the neighbours check's radius
            {hood.total > hood.neighbours.length ? `; the map shows the nearest ${hood.neighbours.length}` : ""}. Discs are
            coloured by median age (pale young, deep old); a heavy ring marks a maximum-limiting date; the teal ring is this site.
          </p>
          <div className="mt-3">
            {hydrated ? (
              <Suspense fallback={<MapPlaceholder text="Loading the map…" />}>
                <NeighbourMap centre={centre} radiusKm={hood.radiusKm} neighbours={marks} ageDomain={ageDomain} onOpen={onOpen} />
              </Suspense>
            ) : (
              <MapPlaceholder text="The map appears once the page has loaded." />
            )}
          </div>
          <table className="data-table mt-3 text-sm" data-testid="neighbours-table">
            <thead>
              <tr>
                <th scope="col">Lab code</th>
                <th scope="col" className="text-right">
                  km
                </th>
                <th scope="col">Kind</th>
                <th scope="col" className="text-right">
                  Median (cal BP)
                </th>
                <th scope="col">95.4 % range</th>
                <th scope="col">Grade</th>
              </tr>
            </thead>
            <tbody>
              {shown.map((n) => (
                <tr key={n.id}>
                  <td>
                    <Link to={`/determinations/${n.id}`}>{n.labCode}</Link>
                    {n.sameSite ? <span className="ml-1 text-muted">(same site)</span> : null}
                  </td>
                  <td className="text-right">{n.km.toFixed(1)}</td>
                  <td>{CONSTRAINT_KIND_LABELS[n.constraintKind] ?? n.constraintKind}</td>
                  <td className="text-right">{n.medianCalBp != null ? formatCal(n.medianCalBp) : "—"}</td>
                  <td className="whitespace-nowrap">{formatCalRange(n.hpd95FromBp, n.hpd95ToBp) || "—"}</td>
                  <td>
                    <GradeBadge grade={n.grade} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {hood.total > shown.length ? (
            <p className="mt-1 text-sm text-muted">
              The nearest {shown.length} of {hood.total}.
            </p>
          ) : null}
        </>
      )}
    </section>
  );
}

function MapPlaceholder({ text }: { text: string }) {
  return (
    <div className="flex h-[340px] items-center justify-center rounded border border-rule bg-ice-50 text-sm text-muted">
      {text}
    </div>
  );
}
