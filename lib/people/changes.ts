import type { Transaction } from "kysely";
import type { Database, PeopleChangeKind } from "../../db/types";

/**
 * Records a change to who may use the lab, in the caller's transaction.
 * (The catalogue's provenance log will take these over as lab events.)
 */
export async function recordPeopleChange(
  trx: Transaction<Database>,
  change: { actorId: string | null; subjectUserId: string | null; subjectEmail: string; kind: PeopleChangeKind; detail?: Record<string, unknown> },
): Promise<void> {
  await trx
    .insertInto("people_changes")
    .values({
      actor_id: change.actorId,
      subject_user_id: change.subjectUserId,
      subject_email: change.subjectEmail,
      kind: change.kind,
      detail: JSON.stringify(change.detail ?? {}),
    })
    .execute();
}
