import "server-only";
import { db } from "../../db";
import { redactSingleUseLinks } from "./redact";

/** The outbox as the app shows it (the Outbox page, GET /api/outbox): single-use links hidden. */
export async function listOutbox(limit = 500) {
  const rows = await db
    .selectFrom("outbox")
    .select([
      "id",
      "to_address as to",
      "subject",
      "body_text as text",
      "status",
      "attempts",
      "last_error as lastError",
      "created_at as createdAt",
      "sent_at as sentAt",
    ])
    .orderBy("created_at", "desc")
    .limit(limit)
    .execute();
  return rows.map((r) => ({ ...r, text: redactSingleUseLinks(r.text) }));
}
