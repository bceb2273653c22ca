import { useEffect, useRef, type RefObject } from "react";
import type { FetcherWithComponents } from "react-router";
import type { PreviewResult } from "#app/utils/submission-form.ts";

/*
 * The live calendar-age preview: the form's data goes to a resource route that computes the age
 * exactly as the registry will store it, debounced, and only when something changed.
 */
export const PREVIEW_ACTION = "/api/determination-preview";
const PREVIEW_DEBOUNCE_MS = 350;

/**
 * Returns the form's change handler. `preview` is the page's `useFetcher<PreviewResult>()`, whose data
 * the panel shows; `deps`: choices that enable or disable fields change what is submitted, so a change re-checks.
 */
export function useLivePreview(
  formRef: RefObject<HTMLFormElement | null>,
  preview: FetcherWithComponents<PreviewResult>,
  deps: readonly unknown[],
) {
  const timer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const lastSent = useRef("");
  const schedulePreview = () => {
    clearTimeout(timer.current);
    timer.current = setTimeout(() => {
      if (!formRef.current) return;
      const data = new FormData(formRef.current);
      const key = new URLSearchParams(data as unknown as Record<string, string>).toString();
      if (key === lastSent.current) return;
      lastSent.current = key;
      void preview.submit(data, { method: "post", action: PREVIEW_ACTION });
    }, PREVIEW_DEBOUNCE_MS);
  };
  useEffect(() => {
    schedulePreview();
    return () => clearTimeout(timer.current);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- the caller names what should refresh the preview (the fields' values); schedulePreview is new each render by design
  }, deps);
  return schedulePreview;
}
