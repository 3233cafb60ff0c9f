import "server-only";
import { sql, type Transaction } from "kysely";
import { db } from "../../db";
import type { Database } from "../../db/types";
import type { SessionUser } from "../auth/session-user";
import { AppError } from "../http/errors";
import { appendEvent, appendEvents } from "../provenance";
import { createDiscSchema, type DiscEdit, type DiscInput, updateDiscSchema } from "../validation/catalogue";
import { listDiscsWith } from "./list-query";
import { type DiscRecord, readDisc, refreshSearch } from "./records";

function discColumns(d: DiscInput) {
  return {
    accession_id: d.accessionId,
    shelf_mark: d.shelfMark,
    label_name: d.labelName,
    catalogue_number: d.catalogueNumber,
    format: d.format,
    base: d.base ?? null,
    diameter_in: d.diameterIn ?? null,
    nominal_speed_rpm: d.nominalSpeedRpm,
    groove: d.groove,
    cut: d.cut,
    recording_date: d.recordingDate ?? null,
    recorded_from_year: d.recordedFromYear ?? null,
    recorded_to_year: d.recordedToYear ?? null,
    condition_grade: d.conditionGrade,
    condition_flags: d.conditionFlags,
    condition_notes: d.conditionNotes,
    handling_notes: d.handlingNotes,
  };
}

function sideColumns(s: DiscInput["sides"][number]) {
  return {
    designation: s.designation,
    matrix_number: s.matrixNumber,
    take: s.take,
    title: s.title,
    performers: s.performers,
    notes: s.notes,
  };
}

/** The fields that go into events: the disc as the archivist sees it, without bookkeeping. */
function eventView(d: DiscRecord) {
  const { sides, createdAt, updatedAt, version, accessionIdentifier, ...fields } = d;
  return { ...fields, sides: sides.map(({ assignedEngineerName, version: v, ...s }) => s) };
}

async function assertShelfMarkFree(
  trx: Transaction<Database>,
  shelfMark: string,
  exceptId?: string,
): Promise<void> {
  let q = trx
    .selectFrom("discs")
    .select("id")
    .where(sql`lower(shelf_mark)`, "=", shelfMark.toLowerCase());
  if (exceptId) q = q.where("id", "!=", exceptId);
  if (await q.executeTakeFirst()) {
    throw new AppError("conflict", 409, `Shelf mark ${shelfMark} is already used by another disc.`, {
      shelfMark: ["Already used by another disc."],
    });
  }
}

async function assertAccession(trx: Transaction<Database>, id: string): Promise<void> {
  if (!(await trx.selectFrom("accessions").select("id").where("id", "=", id).executeTakeFirst())) {
    throw new AppError("invalid", 422, "That accession does not exist.", {
      accessionId: ["Unknown accession."],
    });
  }
}

/**
 * Inserts a validated disc and its sides with its "disc.created" event, inside the
 * caller's transaction (a single create, or every row of an import).
 */
export async function insertDisc(
  trx: Transaction<Database>,
  actor: SessionUser,
  d: DiscInput,
  origin: Record<string, unknown> = {},
): Promise<string> {
  await assertAccession(trx, d.accessionId);
  await assertShelfMarkFree(trx, d.shelfMark);
  const disc = await trx.insertInto("discs").values(discColumns(d)).returning("id").executeTakeFirstOrThrow();
  const seen = new Set<string>();
  for (const s of d.sides) {
    const key = s.designation.toLowerCase();
    if (seen.has(key))
      throw new AppError("invalid", 422, `Side ${s.designation} is listed twice.`, {
        sides: [`Side ${s.designation} is listed twice.`],
      });
    seen.add(key);
    await trx
      .insertInto("sides")
      .values({ disc_id: disc.id, ...sideColumns(s) })
      .execute();
  }
  await refreshSearch(trx, [disc.id]);
  const created = (await readDisc(trx, disc.id))!;
  await appendEvent(trx, {
    actorId: actor.id,
    kind: "disc.created",
    subjectType: "disc",
    subjectId: disc.id,
    discId: disc.id,
    payload: { after: eventView(created), ...origin },
  });
  return disc.id;
}

/**
 * Inserts many validated discs (an import) inside the caller's transaction with batched
 * statements: the same rows and "disc.created" events as insertDisc, one disc at a time
 * would take minutes for 20 000 rows.
 */
export async function insertDiscs(
  trx: Transaction<Database>,
  actor: SessionUser,
  items: { disc: DiscInput; origin: Record<string, unknown> }[],
): Promise<string[]> {
  if (!items.length) return [];
  const accessionIds = [...new Set(items.map((i) => i.disc.accessionId))];
  const known = await trx.selectFrom("accessions").select("id").where("id", "in", accessionIds).execute();
  if (known.length !== accessionIds.length)
    throw new AppError("invalid", 422, "An accession named in the file does not exist.", {
      accessionId: ["Unknown accession."],
    });
  const marks = items.map((i) => i.disc.shelfMark.toLowerCase());
  const taken = await trx
    .selectFrom("discs")
    .select("shelf_mark")
    .where(sql`lower(shelf_mark)`, "in", marks)
    .limit(1)
    .executeTakeFirst();
  if (taken)
    throw new AppError("conflict", 409, `Shelf mark ${taken.shelf_mark} is already used by another disc.`, {
      shelfMark: ["Already used by another disc."],
    });
  const ids: string[] = [];
  for (let i = 0; i < items.length; i += 500) {
    const chunk = items.slice(i, i + 500);
    const rows = await trx
      .insertInto("discs")
      .values(chunk.map((c) => discColumns(c.disc)))
      .returning("id")
      .execute();
    ids.push(...rows.map((r) => r.id));
  }
  const sideRows = items.flatMap((item, n) =>
    item.disc.sides.map((s) => ({ disc_id: ids[n], ...sideColumns(s) })),
  );
  for (let i = 0; i < sideRows.length; i += 1000)
    await trx
      .insertInto("sides")
      .values(sideRows.slice(i, i + 1000))
      .execute();
  for (let i = 0; i < ids.length; i += 1000) await refreshSearch(trx, ids.slice(i, i + 1000));
  await appendEvents(
    trx,
    items.map((item, n) => ({
      actorId: actor.id,
      kind: "disc.created",
      subjectType: "disc" as const,
      subjectId: ids[n],
      discId: ids[n],
      payload: { after: { id: ids[n], ...item.disc }, ...item.origin },
    })),
  );
  return ids;
}

export async function createDisc(actor: SessionUser, input: unknown): Promise<DiscRecord> {
  const d = createDiscSchema.parse(input);
  const id = await db.transaction().execute((trx) => insertDisc(trx, actor, d));
  return (await readDisc(db, id))!;
}

function changedFields(before: Record<string, unknown>, after: Record<string, unknown>): string[] {
  return Object.keys(after).filter((k) => JSON.stringify(before[k]) !== JSON.stringify(after[k]));
}

/** Who last saved the disc and when, for a conflict message ("someone else saved it" when unknown). */
async function lastSaver(trx: Transaction<Database>, id: string): Promise<string> {
  const last = await trx
    .selectFrom("provenance_events as e")
    .leftJoin("users as u", "u.id", "e.actor_id")
    .select(["u.name", "e.at"])
    .where("e.disc_id", "=", id)
    .orderBy("e.seq", "desc")
    .limit(1)
    .executeTakeFirst();
  return last?.name
    ? `${last.name} saved it at ${last.at.toISOString().slice(11, 16)} UTC`
    : "someone else saved it";
}

/**
 * Saves an edit made from `version`. If someone saved the disc since, nothing is written
 * and the answer is a 409 carrying the disc as it now stands, so the person can see the
 * other change and apply theirs again.
 */
export async function updateDisc(actor: SessionUser, id: string, input: unknown): Promise<DiscRecord> {
  const d = updateDiscSchema.parse(input);
  return db.transaction().execute(async (trx) => {
    const locked = await trx
      .selectFrom("discs")
      .select(["id", "version"])
      .where("id", "=", id)
      .forUpdate()
      .executeTakeFirst();
    if (!locked) throw new AppError("not_found", 404, "No such disc.");
    const before = (await readDisc(trx, id))!;
    if (locked.version !== d.version) {
      throw new AppError(
        "conflict",
        409,
        `This disc changed while you were editing it (${await lastSaver(trx, id)}). Your edit was not saved: review their change, then apply yours again.`,
        undefined,
        { current: before },
      );
    }
    return writeDiscEdit(trx, actor, before, d);
  });
}

/**
 * Writes a checked edit of a disc (locked by the caller, read as `before`, at the version
 * the edit was made from) with its "disc.edited" event naming each changed field, before
 * and after. The form's save and the spreadsheet import both save through here, so an
 * edit reads the same in the provenance log whichever way it came. `origin` adds to the
 * event's payload (the import's file and row).
 */
export async function writeDiscEdit(
  trx: Transaction<Database>,
  actor: SessionUser,
  before: DiscRecord,
  d: DiscEdit,
  origin: Record<string, unknown> = {},
): Promise<DiscRecord> {
  const id = before.id;
  await assertAccession(trx, d.accessionId);
  await assertShelfMarkFree(trx, d.shelfMark, id);
  await trx
    .updateTable("discs")
    .set({ ...discColumns(d), version: before.version + 1, updated_at: sql`now()` })
    .where("id", "=", id)
    .execute();

  const existing = new Map(before.sides.map((s) => [s.id, s]));
  const keep = new Set<string>();
  for (const s of d.sides) {
    if (s.id) {
      const old = existing.get(s.id);
      if (!old)
        throw new AppError("invalid", 422, `Side ${s.designation} does not belong to this disc.`, {
          sides: ["Unknown side."],
        });
      keep.add(s.id);
      await trx
        .updateTable("sides")
        .set({ ...sideColumns(s), version: old.version + 1, updated_at: sql`now()` })
        .where("id", "=", s.id)
        .execute();
    } else {
      await trx
        .insertInto("sides")
        .values({ disc_id: id, ...sideColumns(s) })
        .execute();
    }
  }
  for (const old of before.sides) {
    if (keep.has(old.id)) continue;
    if (old.status !== "catalogued") {
      throw new AppError(
        "conflict",
        409,
        `Side ${old.designation} is already ${old.status.replace("_", " ")} and cannot be removed.`,
        { sides: ["A side in the workflow cannot be removed."] },
      );
    }
    await trx.deleteFrom("sides").where("id", "=", old.id).execute();
  }
  await refreshSearch(trx, [id]);
  const after = (await readDisc(trx, id))!;
  const b = eventView(before);
  const a = eventView(after);
  const changed = changedFields(b, a);
  await appendEvent(trx, {
    actorId: actor.id,
    kind: "disc.edited",
    subjectType: "disc",
    subjectId: id,
    discId: id,
    payload: {
      changed,
      before: Object.fromEntries(changed.map((k) => [k, (b as Record<string, unknown>)[k]])),
      after: Object.fromEntries(changed.map((k) => [k, (a as Record<string, unknown>)[k]])),
      ...origin,
    },
  });
  return after;
}

export async function getDisc(id: string): Promise<DiscRecord> {
  const d = await readDisc(db, id);
  if (!d) throw new AppError("not_found", 404, "No such disc.");
  return d;
}

/** The catalogue: filtered, searched, sorted and paged on the server. */
export function listDiscs(input: unknown) {
  return listDiscsWith(db, input);
}
