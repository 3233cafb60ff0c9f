import "server-only";
import { db } from "../../db";

export async function listOutbox(limit = 500) {
  return db
    .selectFrom("outbox")
    .select(["id", "to_address as to", "subject", "body_text as text", "status", "attempts", "last_error as lastError", "created_at as createdAt", "sent_at as sentAt"])
    .orderBy("created_at", "desc")
    .limit(limit)
    .execute();
}
