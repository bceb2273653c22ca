import type { Role } from "#app/db/schema.ts";

export type NavItem = { to: string; label: string; roles: Role[] | "public" | "signed-in" };

/**
 * Pages appear in the navigation once they work. Each names who may see it; the loaders
 * enforce the same rule, this list only keeps people from seeing links they cannot follow.
 */
export const NAV_ITEMS: NavItem[] = [
  { to: "/calibrate", label: "Calibrate", roles: "public" },
  { to: "/curves", label: "Curves", roles: ["editor"] },
  { to: "/explore", label: "Explore", roles: "signed-in" },
  { to: "/map", label: "Map", roles: "signed-in" },
  { to: "/submit", label: "Submit", roles: ["contributor"] },
  { to: "/uploads", label: "Upload", roles: ["contributor"] },
  { to: "/submissions", label: "My submissions", roles: ["contributor"] },
  { to: "/review", label: "Review", roles: ["reviewer"] },
  { to: "/constraints", label: "Constraint sets", roles: "signed-in" },
  { to: "/releases", label: "Releases", roles: "public" },
  { to: "/checks", label: "Checks", roles: ["editor"] },
  { to: "/runs", label: "Model runs", roles: ["modeller"] },
  { to: "/people", label: "People", roles: ["editor"] },
  { to: "/labs", label: "Labs", roles: ["editor"] },
  { to: "/publications", label: "Publications", roles: ["editor"] },
  { to: "/api-docs", label: "API", roles: "public" },
];

export function navigationFor(roles: Role[] | null): NavItem[] {
  return NAV_ITEMS.filter((item) => {
    if (item.roles === "public") return true;
    if (roles === null) return false;
    if (item.roles === "signed-in") return true;
    return item.roles.some((r) => roles.includes(r));
  });
}
