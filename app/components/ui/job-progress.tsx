import { useEffect } from "react";
import { useFetcher, useRevalidator } from "react-router";
import type { JobView } from "#app/models/jobs.server.ts";
import { groupThousands } from "#app/science/calendar.ts";

/**
 * A background job's progress (see models/jobs.server.ts): polls /api/jobs/:id every second while
 * it runs and revalidates the page once it ends. `unit` names what is counted ("determinations").
 * Without JavaScript the server-rendered state shows, with a hint to reload.
 */
export function JobProgress({ job, unit, label }: { job: JobView; unit: string; label?: string }) {
  const fetcher = useFetcher<JobView>();
  const revalidator = useRevalidator();
  const current = fetcher.data && fetcher.data.id === job.id ? fetcher.data : job;
  const finished = current.status === "done" || current.status === "failed";
  useEffect(() => {
    if (finished) return;
    const timer = setInterval(() => {
      if (fetcher.state === "idle") void fetcher.load(`/api/jobs/${job.id}`);
    }, 1000);
    return () => clearInterval(timer);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- polling restarts only when the job or its finished state changes; `fetcher` changes on every poll
  }, [finished, job.id]);
  useEffect(() => {
    const polled = fetcher.data;
    if (polled?.id === job.id && (polled.status === "done" || polled.status === "failed") && job.status !== polled.status) {
      void revalidator.revalidate();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps -- revalidate once when the polled status changes, not whenever the revalidator or the job prop does
  }, [fetcher.data?.status]);
  const title = label ?? (typeof current.params?.reason === "string" ? current.params.reason : current.kind);
  const pct = current.total ? Math.round((current.progress / current.total) * 100) : 100;
  const shown = current.status === "done" ? 100 : pct;
  return (
    <div className="card space-y-2" data-testid={`job-${job.id}`}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <span className="font-semibold">{title}</span>
        <span className="text-sm text-muted" role="status" aria-live="polite">
          {current.status === "done"
            ? `Done: ${current.message ?? ""}`
            : current.status === "failed"
              ? `Failed: ${current.message ?? ""}`
              : `${groupThousands(current.progress)} of ${groupThousands(current.total)} ${unit} (${pct} %)`}
        </span>
      </div>
      <div
        role="progressbar"
        aria-label={`${title}: ${shown} %`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={shown}
        className="h-2 w-full overflow-hidden rounded bg-ice-100"
      >
        <div
          className={`h-full ${current.status === "failed" ? "bg-ice-300" : "bg-ice-600"} transition-[width]`}
          style={{ width: `${shown}%` }}
        />
      </div>
      {!finished ? (
        <noscript>
          <p className="text-sm text-muted">Reload the page to see how far it has got.</p>
        </noscript>
      ) : null}
    </div>
  );
}
