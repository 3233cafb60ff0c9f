import { route } from "@/lib/http/route";
import { lastChainCheck, runChainCheck } from "@/lib/provenance/audit";

export const dynamic = "force-dynamic";

/** Walks the whole provenance log and reports the first broken link, if any. ?last=1 answers the last run instead. */
export const GET = route("GET /api/provenance/verify", async (req, { user }) =>
  req.nextUrl.searchParams.get("last") ? { last: (await lastChainCheck()) ?? null } : runChainCheck(user),
);
