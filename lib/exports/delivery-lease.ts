// The lease of a bag delivery: the server writing a bag into the delivery bucket renews
// bag_deliveries.heartbeat_at every few seconds, on the renders' lease times
// (lib/jobs/render-lease.ts). A delivery still queued or running whose lease is older than
// the stale limit belonged to a server that stopped (restarted, killed, its machine lost):
// every worker's lease sweep closes it as stopped, saying why, and removes what it had
// written under the bag's folder, so it neither stays "being written" forever nor leaves a
// half bag behind. The curator sees it stopped and writes the bag again. No framework
// imports: the worker runs the sweep.
import { DeleteObjectCommand, ListObjectsV2Command } from "@aws-sdk/client-s3";
import { type Kysely, sql } from "kysely";
import type { Database } from "../../db/types";
import { fromStore } from "../storage/errors";
import { s3 } from "../storage/s3";

export const stoppedDeliveryMessage =
  "The server writing this bag stopped before it was done (it was restarted or lost); what it had written was removed. " +
  "Write the bag to the delivery bucket again.";

/** A bag's own folder (the delivery prefix, then the bag's name): the only prefix the sweep ever empties. */
const bagFolder = /^([A-Za-z0-9._-]+\/)+[A-Za-z0-9._-]+-bag-\d{8}T\d{6}Z\/$/;

/**
 * Closes every delivery whose lease is stale as stopped, and empties its folder. The update
 * is conditional on the lease still being stale, so two workers sweeping at once close each
 * delivery once. Answers the deliveries closed.
 */
export async function releaseStaleDeliveries(
  db: Kysely<Database>,
  staleSeconds: number,
): Promise<{ id: string; bucket: string; prefix: string }[]> {
  const rows = await db
    .updateTable("bag_deliveries")
    .set({ state: "failed", error: stoppedDeliveryMessage, finished_at: sql<Date>`now()` })
    .where("state", "in", ["queued", "running"])
    .where(
      sql<boolean>`coalesce(heartbeat_at, started_at, requested_at) < now() - make_interval(secs => ${staleSeconds})`,
    )
    .returning(["id", "bucket", "prefix"])
    .execute();
  for (const r of rows) if (bagFolder.test(r.prefix)) await emptyFolder(r.bucket, r.prefix);
  return rows;
}

async function emptyFolder(bucket: string, prefix: string): Promise<void> {
  let token: string | undefined;
  do {
    const page = await fromStore(`list ${prefix}`, () =>
      s3().send(new ListObjectsV2Command({ Bucket: bucket, Prefix: prefix, ContinuationToken: token })),
    );
    for (const o of page.Contents ?? [])
      await fromStore(`delete ${o.Key}`, () =>
        s3().send(new DeleteObjectCommand({ Bucket: bucket, Key: o.Key })),
      );
    token = page.IsTruncated ? page.NextContinuationToken : undefined;
  } while (token);
}
