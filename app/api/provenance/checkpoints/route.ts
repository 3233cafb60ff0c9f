import { route } from "@/lib/http/route";
import { CHAIN_CHECKPOINT_QUEUE } from "@/lib/jobs/boss";
import { sendJob } from "@/lib/jobs/web-boss";

export const dynamic = "force-dynamic";

/**
 * Anchor the provenance chain now: the worker verifies the log, writes a checkpoint of
 * its head into the bucket (never overwritten) and mails it to the curators.
 */
export const POST = route("POST /api/provenance/checkpoints", async (_req, { user }) => {
  await sendJob(CHAIN_CHECKPOINT_QUEUE, { reason: "requested", requestedBy: user.id });
  return Response.json({ queued: true }, { status: 202 });
});
