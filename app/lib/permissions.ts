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
  "view:runs": ["owner", "lead", "tech", "desk"],
  "view:jobs": ["owner", "lead", "tech", "desk"],
  "edit:jobs": ["owner", "lead", "desk"],
  "view:insights": ["owner", "lead"],
  "edit:meters": ["owner", "lead"],
  "manage:members": ["owner"],
  "manage:shop": ["owner"],
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

export function can(role: Role | null | undefined, permission: Permission): boolean {
  return !!role && (PERMISSIONS[permission] as readonly Role[]).includes(role);
}
