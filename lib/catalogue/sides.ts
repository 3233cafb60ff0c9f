import "server-only";
import { db } from "../../db";
import { AppError } from "../http/errors";
import { readDisc } from "./records";

/** One side with its whole disc (for the bench and the review pages). */
export async function getSideWithDisc(sideId: string) {
  if (!/^[0-9a-f-]{36}$/i.test(sideId)) throw new AppError("not_found", 404, "No such side.");
  const row = await db.selectFrom("sides").select("disc_id").where("id", "=", sideId).executeTakeFirst();
  if (!row) throw new AppError("not_found", 404, "No such side.");
  const disc = (await readDisc(db, row.disc_id))!;
  return { side: disc.sides.find((s) => s.id === sideId)!, disc };
}
