import fs from "node:fs";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { buildBaseDatabase } from "../support/base-db.ts";

declare module "vitest" {
  export interface ProvidedContext {
    integrationDir: string;
  }
}

/**
 * Builds one migrated database with the curves imported; every test file copies it
 * (tests/integration/setup.ts), so tests start from the same state and never share writes.
 * Each run has a folder of its own, so two runs on one machine never delete each other's files.
 */
export default async function setup(project: TestProject) {
  const dir = path.resolve(`tmp/integration/run-${process.pid}`);
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  await buildBaseDatabase(path.join(dir, "base.db"));
  project.provide("integrationDir", dir);
  return () => fs.rmSync(dir, { recursive: true, force: true });
}
