import "server-only";
import { sql } from "kysely";
import { db } from "../../db";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { appendEvent } from "../provenance";
import { accessionSchema } from "../validation/catalogue";

export async function listAccessions() {
  return db
    .selectFrom("accessions as a")
    .select((eb) => [
      "a.id",
      "a.identifier",
      "a.source",
      "a.received_on as receivedOn",
      "a.notes",
      eb
        .selectFrom("discs")
        .select(sql<number>`count(*)::int`.as("n"))
        .whereRef("discs.accession_id", "=", "a.id")
        .as("discCount"),
    ])
    .orderBy("a.received_on", "desc")
    .orderBy("a.identifier")
    .execute();
}

export async function createAccession(actor: SessionUser, input: unknown) {
  const a = accessionSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    const taken = await trx
      .selectFrom("accessions")
      .select("id")
      .where(sql`lower(identifier)`, "=", a.identifier.toLowerCase())
      .executeTakeFirst();
    if (taken)
      throw new AppError("conflict", 409, `Accession ${a.identifier} already exists.`, {
        identifier: ["Already exists."],
      });
    const row = await trx
      .insertInto("accessions")
      .values({ identifier: a.identifier, source: a.source, received_on: a.receivedOn, notes: a.notes })
      .returning(["id", "identifier", "source", "received_on as receivedOn", "notes"])
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "accession.received",
      subjectType: "accession",
      subjectId: row.id,
      payload: { after: a },
    });
    return row;
  });
}
