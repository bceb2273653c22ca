// @ts-check
/*
 * The file every worker thread starts from (see pool.server.ts). The application's code is
 * TypeScript, loaded in the thread through tsx's loader, so the thread runs the very modules the
 * server runs; each task is then handed to tasks.server.ts.
 */
import { register } from "tsx/esm/api";

register();
const tasks = await import("./tasks.server.ts");

export default tasks.runTask;
