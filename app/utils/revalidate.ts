import type { ShouldRevalidateFunctionArgs } from "react-router";

/**
 * `shouldRevalidate` for pages whose live previews post to /api/… (the calibration API, the
 * determination preview): those posts change nothing the page loaded, so its loaders do not run
 * again after them. Every other submission revalidates as usual.
 */
export function revalidateUnlessApiCall({ formAction, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs): boolean {
  if (formAction?.startsWith("/api/")) return false;
  return defaultShouldRevalidate;
}
