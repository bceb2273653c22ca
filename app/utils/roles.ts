import type { Role } from "#app/db/schema.ts";

// Client-safe words for the roles (the names themselves live in the schema and a migration).
export const ROLE_WORDS: Record<Role, { label: string; hint: string }> = {
  contributor: { label: "Contributor", hint: "submits determinations" },
  reviewer: { label: "Reviewer", hint: "grades determinations" },
  modeller: { label: "Modeller", hint: "builds constraint sets, uses the API" },
  editor: { label: "Editor", hint: "invites people, curves, releases, audit log" },
};

export const ROLE_ORDER = Object.keys(ROLE_WORDS) as Role[];
