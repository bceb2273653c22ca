import type { IncomingMessage } from "node:http";
export function clientAddressOf(input: { forwardedFor?: string | string[]; socketAddress?: string; trustProxy: boolean }): string;
export function clientAddress(options: { trustProxy: boolean }): (req: IncomingMessage, res: unknown, next: () => void) => void;
