import "server-only";
import { z } from "zod";
import { db } from "../../db";
import { AppError } from "../http/errors";
import { FIXITY_QUEUE, fixityJobKey } from "../jobs/boss";
import { sendJob } from "../jobs/web-boss";
import { storedObjects } from ".";

export const fixityRequestSchema = z.object({ discId: z.uuid({ error: "Choose a disc." }) });

/** Queues a fixity check of every stored object of one disc, now. */
export async function requestDiscFixity(input: unknown): Promise<{ queued: number; askedAt: number }> {
  const { discId } = fixityRequestSchema.parse(input);
  const disc = await db.selectFrom("discs").select("id").where("id", "=", discId).executeTakeFirst();
  if (!disc) throw new AppError("not_found", 404, "No such disc.");
  const askedAt = Date.now();
  const objects = await storedObjects(db, { discId });
  for (const o of objects)
    await sendJob(FIXITY_QUEUE, { kind: o.kind, id: o.id }, { singletonKey: fixityJobKey(o) });
  return { queued: objects.length, askedAt };
}

/**
 * Failed checks not yet followed by a passing one for the same object: what the audit page
 * raises. Given objects' ids, only theirs (a bag is not made of a file whose alert is open).
 */
export async function openFixityAlerts(objectIds?: string[]) {
  if (objectIds && !objectIds.length) return [];
  let query = db
    .selectFrom("fixity_checks as f")
    .leftJoin("sides as s", "s.id", "f.side_id")
    // A label image of the sleeve has no side: its check names the disc itself.
    .innerJoin("discs as d", (j) => j.on((eb) => eb("d.id", "=", eb.fn.coalesce("f.disc_id", "s.disc_id"))))
    .select([
      "f.id",
      "f.object_kind as objectKind",
      "f.object_id as objectId",
      "f.object_key as objectKey",
      "f.outcome",
      "f.detail",
      "f.checked_at as checkedAt",
      "s.designation",
      "d.id as discId",
      "d.shelf_mark as shelfMark",
    ])
    .where("f.outcome", "<>", "pass")
    .where((eb) =>
      eb.not(
        eb.exists(
          eb
            .selectFrom("fixity_checks as later")
            .select("later.id")
            .whereRef("later.object_id", "=", "f.object_id")
            .whereRef("later.checked_at", ">", "f.checked_at"),
        ),
      ),
    )
    .orderBy("f.checked_at", "desc");
  if (objectIds) query = query.where("f.object_id", "in", objectIds);
  return query.execute();
}
