// The lab of a submitted row: named by lab_name; else the contributor's own lab; else the lab whose
// code prefix the lab code carries; else a lab registered from that prefix, unconfirmed until an
// editor confirms or merges it. Part of the one placement rule (placement.server.ts).

import type { Db } from "#app/db/client.server.ts";
import { labs } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import type { DeterminationRow, RowIssue } from "#app/utils/determination-input/row.ts";

export type LabRef = { id: number; name: string; codePrefix: string; confirmed: boolean };
export type NewLab = { name: string; codePrefix: string; from: "lab_name" | "prefix"; id?: number };
export type LabTarget = { lab: LabRef } | { newLab: NewLab };

/** What lab planning needs from the placement of a file. */
export type LabPlanning = {
  labs: LabRef[];
  userLab: LabRef | null;
  newLabs: NewLab[];
  options: { mayRegisterLabs: boolean };
};

const SEPARATOR = /[-\s_./]/;

/** The lab whose code prefix a lab code carries (longest first), ABC matching "ABC-12" and "abc12" but not "ABCD-1". */
export function labOfCode<T extends { codePrefix: string }>(labList: T[], code: string): T | undefined {
  const lower = code.toLowerCase();
  let best: T | undefined;
  for (const l of labList) {
    const p = l.codePrefix.toLowerCase();
    if (!p || !lower.startsWith(p) || /\p{L}/u.test(lower.charAt(p.length))) continue;
    if (!best || p.length > best.codePrefix.length) best = l;
  }
  return best;
}

/** The prefix a new lab would be registered under: the part before the first separator, or the leading letters. */
export function codePrefixOf(code: string): string | null {
  const m = new RegExp(`^([^${SEPARATOR.source.slice(1, -1)}]+)${SEPARATOR.source}`).exec(code);
  const candidate = m ? m[1] : /^\p{L}+/u.exec(code)?.[0];
  return candidate && /\p{L}/u.test(candidate) ? candidate : null;
}

const nameOf = (t: LabTarget) => ("lab" in t ? t.lab.name : t.newLab.name);
const same = (a: LabTarget, b: LabTarget) => ("lab" in a && "lab" in b ? a.lab.id === b.lab.id : nameOf(a) === nameOf(b));

function unique(wanted: string, taken: string[], join: (base: string, k: number) => string): string {
  const used = new Set(taken.map((t) => t.toLowerCase()));
  let value = wanted;
  for (let k = 2; used.has(value.toLowerCase()); k++) value = join(wanted, k);
  return value;
}

function newLab(p: LabPlanning, name: string, prefix: string, from: NewLab["from"]): NewLab {
  const all = [...p.labs, ...p.newLabs];
  const lab: NewLab = {
    name: unique(
      name,
      all.map((l) => l.name),
      (b, k) => `${b} (${k})`,
    ),
    codePrefix: unique(
      prefix,
      all.map((l) => l.codePrefix),
      (b, k) => `${b}${k}`,
    ),
    from,
  };
  p.newLabs.push(lab);
  return lab;
}

const UNCONFIRMED = "it will be registered as an unconfirmed laboratory for an editor to confirm or merge";

/** Plans the lab of a row; problems go to `issues` (at lab_name), cautions to `warnings`. */
export function planLab(
  p: LabPlanning,
  row: Partial<DeterminationRow>,
  issues: RowIssue[],
  warnings: RowIssue[],
): LabTarget | null {
  const code = row.lab_code;
  const knownLab = code ? labOfCode(p.labs, code) : undefined;
  const plannedLab = code && !knownLab ? labOfCode(p.newLabs, code) : undefined;
  const byPrefix: LabTarget | null = knownLab ? { lab: knownLab } : plannedLab ? { newLab: plannedLab } : null;
  const prefix = code ? codePrefixOf(code) : null;
  let target: LabTarget | null = null;
  if (row.lab_name) {
    const name = row.lab_name.toLowerCase();
    const named = p.labs.find((l) => l.name.toLowerCase() === name);
    const planned = p.newLabs.find((l) => l.name.toLowerCase() === name);
    if (named) target = { lab: named };
    else if (planned) target = { newLab: planned };
    else if (!p.options.mayRegisterLabs) {
      issues.push({
        column: "lab_name",
        message: `There is no laboratory named "${row.lab_name}" in the registry; choose one from the list.`,
      });
    } else {
      target = { newLab: newLab(p, row.lab_name, prefix ?? "LAB", "lab_name") };
    }
  } else if (p.userLab) target = { lab: p.userLab };
  else if (byPrefix) target = byPrefix;
  else if (code === undefined) return null;
  else if (!prefix || !p.options.mayRegisterLabs) {
    issues.push({
      column: "lab_name",
      message: `Give lab_name: the lab code ${code} has no letter prefix that names its laboratory, and your account has no lab.`,
    });
  } else target = { newLab: newLab(p, `Laboratory ${prefix}`, prefix, "prefix") };
  if (target && "newLab" in target) {
    const lab = target.newLab;
    warnings.push(
      lab.from === "lab_name"
        ? { column: "lab_name", message: `The laboratory "${lab.name}" is not in the registry yet: ${UNCONFIRMED}.` }
        : {
            column: "lab_code",
            message: `No laboratory in the registry uses the code prefix ${lab.codePrefix}: ${UNCONFIRMED} ("${lab.name}").`,
          },
    );
  }
  if (target && byPrefix && !same(target, byPrefix)) {
    warnings.push({
      column: "lab_code",
      message: `The prefix of ${code} belongs to ${nameOf(byPrefix)}, but this row's laboratory is ${nameOf(target)}.`,
    });
  }
  return target;
}

/** Writes a planned lab once (unconfirmed, registered by the uploader) with its audit entry; returns its id. */
export function registerLab(db: Db, lab: NewLab, userId: number, ip?: string | null): number {
  if (lab.id !== undefined) return lab.id;
  const created = db
    .insert(labs)
    .values({ name: lab.name, codePrefix: lab.codePrefix, confirmed: false, registeredBy: userId })
    .returning()
    .get();
  audit(db, {
    actorId: userId,
    action: "lab.register",
    entity: "lab",
    entityId: created.id,
    after: { name: created.name, codePrefix: created.codePrefix, confirmed: false },
    ip,
  });
  lab.id = created.id;
  return created.id;
}
