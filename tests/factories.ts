// Factories shared by the tests and the demo seed: each builds one row with sensible, plainly
// fictional defaults through the same insert helpers the seed uses, so a test states only what
// it is about. Determinations get their audit row like any other.

import type { Db } from "#app/db/client.server.ts";
import type { Role } from "#app/db/schema.ts";
import {
  insertDetermination,
  insertLab,
  insertSample,
  insertSite,
  type DeterminationRow,
  type LabRow,
  type NewDetermination,
  type NewLab,
  type NewSample,
  type NewSite,
  type SampleRow,
  type SiteRow,
} from "#app/models/submission/determinations.server.ts";
import { createUser } from "#app/models/accounts/users.server.ts";

let counter = 0;
// A per-process base keeps codes unique even when several factories share one database file.
const base = Date.now() % 100_000;
const next = () => ++counter;

export function createTestUser(
  db: Db,
  roles: readonly Role[] = ["contributor"],
  overrides: { email?: string; name?: string } = {},
): { id: number; email: string; roles: Role[] } {
  const n = next();
  const email = overrides.email ?? `person${base}-${n}@example.test`;
  const id = createUser(db, { email, name: overrides.name ?? `Test Person ${n}`, roles });
  return { id, email, roles: [...roles] };
}

export function createTestLab(db: Db, overrides: Partial<NewLab> = {}): LabRow {
  const n = next();
  return insertLab(db, {
    name: `Frostmere Test Laboratory ${base}-${n}`,
    codePrefix: `FT${base}X${n}`,
    city: "Port Ivalen",
    ...overrides,
  });
}

export function createTestSite(db: Db, overrides: Partial<NewSite> = {}): SiteRow {
  const n = next();
  return insertSite(db, {
    name: `Kettlebrook Test Site ${n}`,
    latitude: 57.5 + (n % 20) * 0.05,
    longitude: -65.5 - (n % 20) * 0.05,
    elevationM: 40,
    setting: "raised marine delta",
    region: "Labrador Sea coast",
    ...overrides,
  });
}

/** A sample; creates its site unless `siteId` is given. */
export function createTestSample(db: Db, overrides: Partial<NewSample> = {}): SampleRow {
  const n = next();
  const siteId = overrides.siteId ?? createTestSite(db).id;
  return insertSample(db, {
    fieldCode: `TS-${n}`,
    material: "plant macrofossil",
    depthCm: 120,
    stratUnit: "basal organic silt",
    stratOrder: 2,
    context: "lake core, first organic sediment above till",
    ...overrides,
    siteId,
  });
}

/**
 * A determination (radiocarbon on a plant macrofossil, IntCal20, minimum-limiting by default),
 * written with its `determination.create` audit row. Creates the lab and sample unless given;
 * `actorId` defaults to the contributor.
 */
export function createTestDetermination(
  db: Db,
  overrides: Partial<NewDetermination> & { actorId?: number | null } = {},
): DeterminationRow {
  const { actorId, ...values } = overrides;
  const n = next();
  const labId = values.labId ?? createTestLab(db).id;
  const sampleId = values.sampleId ?? createTestSample(db).id;
  const radiocarbon = (values.method ?? "radiocarbon") === "radiocarbon";
  const defaults: Partial<NewDetermination> = radiocarbon
    ? {
        c14AgeYr: 9000,
        c14ErrorYr: 40,
        d13cPermil: -26.5,
        ageNormalised: true,
        pretreatment: "acid–base–acid",
        curveName: "intcal20",
      }
    : {
        signal: "OSL",
        mineral: "quartz",
        deGy: 22.5,
        deErrorGy: 1.1,
        doseRateGyPerKa: 2.2,
        doseRateErrorGyPerKa: 0.11,
        measurementYear: 2018,
        aliquots: 24,
        ageModel: "CAM",
      };
  return insertDetermination(
    db,
    {
      labCode: `FT-${base}-${n}`,
      method: "radiocarbon",
      constraintKind: "minimum",
      ...defaults,
      ...values,
      labId,
      sampleId,
      contributorId: values.contributorId ?? actorId ?? null,
    },
    actorId ?? values.contributorId ?? null,
  );
}
