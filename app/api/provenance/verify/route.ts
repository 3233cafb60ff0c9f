import { db } from "@/db";
import { route } from "@/lib/http/route";
import { lastChainCheck, runChainCheck } from "@/lib/provenance/audit";
import { lastCheckpoint } from "@/lib/provenance/checkpoints";

export const dynamic = "force-dynamic";

/**
 * Walks the whole provenance log, checks it against every checkpoint in the bucket and
 * reports the first broken link or contradicted checkpoint, if any. ?last=1 answers the
 * last run and the newest checkpoint instead.
 */
export const GET = route("GET /api/provenance/verify", async (req, { user }) =>
  req.nextUrl.searchParams.get("last")
    ? { last: (await lastChainCheck()) ?? null, lastCheckpoint: (await lastCheckpoint(db)) ?? null }
    : runChainCheck(user),
);
