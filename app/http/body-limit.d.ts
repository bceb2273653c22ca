import type { IncomingMessage, ServerResponse } from "node:http";
export type BodyLimits = { uploadMaxBytes: number; modelRunMaxBytes?: number; modelRunBatchMaxBytes?: number };
export function bodyLimitFor(pathname: string, options: BodyLimits): number;
export const refusedBodies: WeakSet<object>;
export class BodyTooLarge extends Error {
  limit: number;
  constructor(limit: number);
}
export function bodyLimit(
  options: BodyLimits & {
    streaming?: boolean;
  },
): (req: IncomingMessage, res: ServerResponse, next: () => void) => void;
