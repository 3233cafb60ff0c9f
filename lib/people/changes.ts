import type { Transaction } from "kysely";
import type { Database, PeopleChangeKind } from "../../db/types";
import { appendEvent } from "../provenance";

/** Records a change to who may use the lab as a provenance event, in the caller's transaction. */
export async function recordPeopleChange(
  trx: Transaction<Database>,
  change: {
    actorId: string | null;
    subjectUserId: string | null;
    subjectEmail: string;
    kind: PeopleChangeKind;
    detail?: Record<string, unknown>;
  },
): Promise<void> {
  await appendEvent(trx, {
    actorId: change.actorId,
    kind: `person.${change.kind}`,
    subjectType: "person",
    subjectId: change.subjectUserId ?? change.subjectEmail,
    payload: { email: change.subjectEmail, ...(change.detail ?? {}) },
  });
}
