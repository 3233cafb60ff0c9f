import { type Kysely, sql } from "kysely";

// Frozen in time: imports no app code.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`CREATE TYPE role AS ENUM ('admin', 'archivist', 'engineer', 'curator')`.execute(db);

  await db.schema
    .createTable("users")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("email", "text", (c) => c.notNull())
    .addColumn("name", "text", (c) => c.notNull())
    .addColumn("role", sql`role`, (c) => c.notNull())
    .addColumn("password_hash", "text", (c) => c.notNull())
    .addColumn("active", "boolean", (c) => c.notNull().defaultTo(true))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("updated_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("users_email_lower", sql`email = lower(email)`)
    .execute();
  await db.schema.createIndex("users_email_key").unique().on("users").column("email").execute();

  await db.schema
    .createTable("invitations")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("email", "text", (c) => c.notNull())
    .addColumn("role", sql`role`, (c) => c.notNull())
    .addColumn("token_hash", "text", (c) => c.notNull().unique())
    .addColumn("invited_by", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("accepted_at", "timestamptz")
    .addColumn("accepted_user_id", "uuid", (c) => c.references("users.id"))
    .addColumn("revoked_at", "timestamptz")
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addCheckConstraint("invitations_email_lower", sql`email = lower(email)`)
    .execute();

  await db.schema
    .createTable("password_resets")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("user_id", "uuid", (c) => c.notNull().references("users.id"))
    .addColumn("token_hash", "text", (c) => c.notNull().unique())
    .addColumn("expires_at", "timestamptz", (c) => c.notNull())
    .addColumn("used_at", "timestamptz")
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  await db.schema
    .createTable("sign_in_attempts")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("email", "text", (c) => c.notNull())
    .addColumn("succeeded", "boolean", (c) => c.notNull())
    .addColumn("reason", "text")
    .addColumn("ip", "text")
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema
    .createIndex("sign_in_attempts_email_at")
    .on("sign_in_attempts")
    .columns(["email", "at"])
    .execute();

  await db.schema
    .createTable("people_changes")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("actor_id", "uuid", (c) => c.references("users.id"))
    .addColumn("subject_user_id", "uuid", (c) => c.references("users.id"))
    .addColumn("subject_email", "text", (c) => c.notNull())
    .addColumn("kind", "text", (c) => c.notNull())
    .addColumn("detail", "jsonb", (c) => c.notNull().defaultTo(sql`'{}'::jsonb`))
    .addColumn("at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex("people_changes_at").on("people_changes").column("at").execute();

  await db.schema
    .createTable("outbox")
    .addColumn("id", "uuid", (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn("to_address", "text", (c) => c.notNull())
    .addColumn("subject", "text", (c) => c.notNull())
    .addColumn("body_text", "text", (c) => c.notNull())
    .addColumn("status", "text", (c) => c.notNull().defaultTo("queued"))
    .addColumn("attempts", "integer", (c) => c.notNull().defaultTo(0))
    .addColumn("last_error", "text")
    .addColumn("next_attempt_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("created_at", "timestamptz", (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn("sent_at", "timestamptz")
    .addCheckConstraint("outbox_status", sql`status IN ('queued', 'sent', 'failed')`)
    .execute();
  await db.schema.createIndex("outbox_due").on("outbox").columns(["status", "next_attempt_at"]).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const t of [
    "outbox",
    "people_changes",
    "sign_in_attempts",
    "password_resets",
    "invitations",
    "users",
  ]) {
    await db.schema.dropTable(t).execute();
  }
  await sql`DROP TYPE role`.execute(db);
}
