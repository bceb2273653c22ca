import type { IncomingMessage, ServerResponse } from "node:http";
export function securityHeaders(options?: {
  trustProxy?: boolean;
  scripts?: boolean;
}): (req: IncomingMessage, res: ServerResponse, next: (err?: unknown) => void) => void;
