import { createContext, useContext } from "react";

/**
 * This request's Content-Security-Policy nonce, provided by entry.server.tsx around the render and
 * read by the document shell for React Router's inline scripts. Empty in the browser (browsers
 * hide nonce attributes from script, and hydration keeps the server's).
 */
export const NonceContext = createContext("");

export function useNonce(): string {
  return useContext(NonceContext);
}
