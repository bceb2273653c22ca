export function logLine(fields: Record<string, unknown>): void;
export function logError(error: unknown, fields?: Record<string, unknown>): void;
export function requestLog(): (
  req: import("node:http").IncomingMessage,
  res: import("node:http").ServerResponse,
  next: () => void,
) => void;
