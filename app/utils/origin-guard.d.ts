import type { IncomingMessage, ServerResponse } from "node:http";

export function crossOriginRefusal(request: {
  method: string;
  headers: Record<string, string | string[] | undefined> | Headers;
  appUrl?: string;
  trustProxy?: boolean;
}): string | null;

export function originGuard(options?: {
  appUrl?: string;
  trustProxy?: boolean;
}): (req: IncomingMessage, res: ServerResponse, next: () => void) => void;
