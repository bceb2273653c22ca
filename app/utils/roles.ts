import type { Role } from "#app/db/schema.ts";

// Client-safe words for the roles (the names themselves live in the schema and a migration).
export const ROLE_WORDS: Record<Role, { label: string; hint: string }> = {
  contributor: { label: "Contributor", hint: "submits determinations (form or spreadsheet), answers reviewers' questions" },
  reviewer: { label: "Reviewer", hint: "grades determinations in the review queue, asks contributors questions" },
  modeller: { label: "Modeller", hint: "saves constraint sets, scores model runs, uses the API" },
  editor: { label: "Editor", hint: "invites people, imports curves, publishes releases" },
};

export const ROLE_ORDER = Object.keys(ROLE_WORDS) as Role[];
