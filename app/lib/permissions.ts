// Who may do what, as one table: the server guards and the client's UI hiding read the same list.
export type Role = "owner" | "lead" | "tech" | "desk";
export const ROLE_LABELS: Record<Role, string> = {
  owner: "Owner",
  lead: "Lead technician",
  tech: "Technician",
  desk: "Front desk",
};

export const PERMISSIONS = {
  "view:maps": ["owner", "lead", "tech", "desk"],
  "edit:maps": ["owner", "lead"],
  "edit:boards": ["owner", "lead"],
  "run:diagnosis": ["owner", "lead", "tech"],
  // Leads answer requests for help on a run: notes and extra checks the tech's walker picks up.
  "help:runs": ["owner", "lead"],
  "view:runs": ["owner", "lead", "tech", "desk"],
  "view:jobs": ["owner", "lead", "tech", "desk"],
  "edit:jobs": ["owner", "lead", "desk"],
  "manage:payments": ["owner", "lead", "desk"],
  "refund:payments": ["owner"],
  "waive:invoice": ["owner"],
  "manage:customers": ["owner"],
  "view:insights": ["owner", "lead"],
  // Personal API tokens: every member manages their own; a token can read only what its member's role can.
  "manage:own-tokens": ["owner", "lead", "tech", "desk"],
  "edit:meters": ["owner", "lead"],
  "manage:members": ["owner"],
  "manage:shop": ["owner"],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

export function can(role: Role | null | undefined, permission: Permission): boolean {
  return !!role && (PERMISSIONS[permission] as readonly Role[]).includes(role);
}
