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

const accessionFields = ["identifier", "source", "receivedOn", "notes"] as const;

/**
 * Corrects an accession's identifier, source, date received or notes. One
 * `accession.edited` event names the fields that changed with their values before and
 * after, in the transaction of the change; saving without a change records nothing.
 */
export async function updateAccession(actor: SessionUser, id: string, input: unknown) {
  const a = accessionSchema.parse(input);
  if (!/^[0-9a-f-]{36}$/i.test(id)) throw new AppError("not_found", 404, "There is no such accession.");
  return db.transaction().execute(async (trx) => {
    const current = await trx
      .selectFrom("accessions")
      .select(["id", "identifier", "source", "received_on as receivedOn", "notes"])
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirst();
    if (!current) throw new AppError("not_found", 404, "There is no such accession.");
    const changed = accessionFields.filter((f) => current[f] !== a[f]);
    if (!changed.length) return current;
    if (changed.includes("identifier")) {
      const taken = await trx
        .selectFrom("accessions")
        .select("id")
        .where(sql`lower(identifier)`, "=", a.identifier.toLowerCase())
        .where("id", "<>", id)
        .executeTakeFirst();
      if (taken)
        throw new AppError("conflict", 409, `Accession ${a.identifier} already exists.`, {
          identifier: ["Another accession has this identifier."],
        });
    }
    const row = await trx
      .updateTable("accessions")
      .set({
        identifier: a.identifier,
        source: a.source,
        received_on: a.receivedOn,
        notes: a.notes,
        updated_at: sql`now()`,
      })
      .where("id", "=", id)
      .returning(["id", "identifier", "source", "received_on as receivedOn", "notes"])
      .executeTakeFirstOrThrow();
    await appendEvent(trx, {
      actorId: actor.id,
      kind: "accession.edited",
      subjectType: "accession",
      subjectId: id,
      payload: {
        identifier: a.identifier,
        changed,
        before: Object.fromEntries(changed.map((f) => [f, current[f]])),
        after: Object.fromEntries(changed.map((f) => [f, a[f]])),
      },
    });
    return row;
  });
}
