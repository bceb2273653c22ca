import { useEffect, useRef, useState } from "react";
import type { CalibrationPlotData } from "#app/models/calibration/calibration-plot.server.ts";
import type { CalibrationItem } from "#app/utils/calibrate-input.ts";
import type { CurvesUsed, PageResult } from "#app/utils/calibrate-results.ts";

/** Items per request to /calibrate/batch (its limit). */
const SLICE = 100;
const DEBOUNCE_MS = 350;

type BatchAnswer = { curves: CurvesUsed; results: PageResult[]; plot: CalibrationPlotData | null } | { error: string };

export type Calibration = {
  /** The items these results answer (a change starts a new run). */
  key: string;
  done: number;
  total: number;
  results: PageResult[];
  curves: CurvesUsed;
  plot: CalibrationPlotData | null;
  error: string | null;
  running: boolean;
};

async function post(body: unknown, signal: AbortSignal): Promise<BatchAnswer> {
  const res = await fetch("/calibrate/batch", {
    method: "POST",
    headers: { "Content-Type": "application/json", Accept: "application/json" },
    body: JSON.stringify(body),
    signal,
  });
  const answer = (await res.json().catch(() => null)) as BatchAnswer | null;
  if (!answer) return { error: `The server answered ${res.status}; try again in a moment.` };
  return answer;
}

/**
 * Calibrates the items as they change (debounced), in slices, so a long sheet shows its progress
 * and each slice's rows as they come. A change of items stops the run under way. With `plot` and
 * one item the answer brings the large plot too.
 */
export function useCalibration(
  items: CalibrationItem[],
  options: { enabled: boolean; plot: boolean; initial: Calibration | null },
): Calibration | null {
  const key = JSON.stringify(items);
  const [state, setState] = useState<Calibration | null>(options.initial);
  const latest = useRef({ items, plot: options.plot });
  useEffect(() => {
    latest.current = { items, plot: options.plot };
  });

  useEffect(() => {
    if (!options.enabled) return;
    if (state?.key === key && !state.error) return;
    const controller = new AbortController();
    const timer = setTimeout(async () => {
      const { items: all, plot } = latest.current;
      if (all.length === 0) {
        setState(null);
        return;
      }
      const run: Calibration = {
        key,
        done: 0,
        total: all.length,
        results: [],
        curves: {},
        plot: null,
        error: null,
        running: true,
      };
      setState(run);
      try {
        for (let i = 0; i < all.length; i += SLICE) {
          const slice = all.slice(i, i + SLICE);
          const answer = await post({ items: slice, plot: plot && all.length === 1 }, controller.signal);
          if ("error" in answer) {
            setState({ ...run, error: answer.error, running: false });
            return;
          }
          run.results = [...run.results, ...answer.results];
          run.curves = { ...run.curves, ...answer.curves };
          run.plot = answer.plot;
          run.done = Math.min(all.length, i + slice.length);
          setState({ ...run, running: run.done < all.length });
        }
      } catch (error) {
        if (controller.signal.aborted) return;
        setState({ ...run, error: "The calibration could not be reached; check the connection and try again.", running: false });
        console.error(error);
      }
    }, DEBOUNCE_MS);
    return () => {
      clearTimeout(timer);
      controller.abort();
    };
    // A new run only when what is to be calibrated changes.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [key, options.enabled]);

  return state;
}

/** The large plot of one chosen row, fetched when the choice changes. */
export function useRowPlot(item: CalibrationItem | null, enabled: boolean) {
  const key = item ? JSON.stringify(item) : "";
  const [plot, setPlot] = useState<{ key: string; plot: CalibrationPlotData | null } | null>(null);
  useEffect(() => {
    if (!enabled || !item) return;
    const controller = new AbortController();
    post({ items: [item], plot: true }, controller.signal)
      .then((answer) => setPlot({ key, plot: "error" in answer ? null : answer.plot }))
      .catch(() => undefined);
    return () => controller.abort();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [key, enabled]);
  return plot?.key === key ? plot.plot : null;
}
