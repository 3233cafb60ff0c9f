import type { ColumnType, Generated, Insertable, Selectable, Updateable } from "kysely";
import type { Role } from "../lib/auth/roles";

type Timestamp = ColumnType<Date, Date | string, Date | string>;
/** A timestamp the database fills in by default. */
type DefaultTimestamp = ColumnType<Date, Date | string | undefined, Date | string>;
type Json = ColumnType<unknown, string, string>;

export interface UsersTable {
  id: Generated<string>;
  email: string;
  name: string;
  role: Role;
  password_hash: string;
  active: Generated<boolean>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface InvitationsTable {
  id: Generated<string>;
  email: string;
  role: Role;
  token_hash: string;
  invited_by: string;
  expires_at: Timestamp;
  accepted_at: Timestamp | null;
  accepted_user_id: string | null;
  revoked_at: Timestamp | null;
  created_at: DefaultTimestamp;
}

export interface PasswordResetsTable {
  id: Generated<string>;
  user_id: string;
  token_hash: string;
  expires_at: Timestamp;
  used_at: Timestamp | null;
  created_at: DefaultTimestamp;
}

export interface SignInAttemptsTable {
  id: Generated<string>;
  email: string;
  succeeded: boolean;
  reason: string | null;
  ip: string | null;
  at: DefaultTimestamp;
}

export type PeopleChangeKind =
  | "invited"
  | "invitation_accepted"
  | "role_changed"
  | "deactivated"
  | "reactivated"
  | "password_reset_requested"
  | "password_reset";

export interface PeopleChangesTable {
  id: Generated<string>;
  actor_id: string | null;
  subject_user_id: string | null;
  subject_email: string;
  kind: PeopleChangeKind;
  detail: Json;
  at: DefaultTimestamp;
}

export type OutboxStatus = "queued" | "sent" | "failed";

export interface OutboxTable {
  id: Generated<string>;
  to_address: string;
  subject: string;
  body_text: string;
  status: Generated<OutboxStatus>;
  attempts: Generated<number>;
  last_error: string | null;
  next_attempt_at: DefaultTimestamp;
  created_at: DefaultTimestamp;
  sent_at: Timestamp | null;
}

export interface CurvePresetsTable {
  id: Generated<string>;
  name: string;
  current_version: Generated<number>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface CurvePresetVersionsTable {
  preset_id: string;
  version: number;
  name: string;
  /** The CurveSpec of lib/curves, as JSON. */
  spec: Json;
  notes: Generated<string>;
  change_note: string;
  created_by: string | null;
  created_at: DefaultTimestamp;
}

export interface Database {
  curve_presets: CurvePresetsTable;
  curve_preset_versions: CurvePresetVersionsTable;
  users: UsersTable;
  invitations: InvitationsTable;
  password_resets: PasswordResetsTable;
  sign_in_attempts: SignInAttemptsTable;
  people_changes: PeopleChangesTable;
  outbox: OutboxTable;
}

export type User = Selectable<UsersTable>;
export type NewUser = Insertable<UsersTable>;
export type UserUpdate = Updateable<UsersTable>;
export type Invitation = Selectable<InvitationsTable>;
export type OutboxMessage = Selectable<OutboxTable>;
