import type { Role } from "./roles";

/** The signed-in person as every permission check sees them: read fresh from the database. */
export interface SessionUser {
  id: string;
  email: string;
  name: string;
  role: Role;
}
