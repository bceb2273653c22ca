import type { IncomingMessage, ServerResponse } from "node:http";
export function bodyLimitFor(pathname: string, options: { uploadMaxBytes: number }): number;
export class BodyTooLarge extends Error {
  limit: number;
  constructor(limit: number);
}
export function bodyLimit(options: {
  uploadMaxBytes: number;
  streaming?: boolean;
}): (req: IncomingMessage, res: ServerResponse, next: () => void) => void;
