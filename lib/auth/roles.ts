export const roles = ["admin", "archivist", "engineer", "curator"] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  admin: "Admin",
  archivist: "Archivist",
  engineer: "Transfer engineer",
  curator: "Curator",
};

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (roles as readonly string[]).includes(value);
}
