import { useSyncExternalStore } from "react";

const subscribe = () => () => {};

/**
 * False while the server renders and during hydration, true afterwards (and at once on client-side
 * navigation): the one flag for parts that only work with JavaScript in the browser.
 */
export function useHydrated(): boolean {
  return useSyncExternalStore(
    subscribe,
    () => true,
    () => false,
  );
}
