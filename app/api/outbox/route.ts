import { route } from "@/lib/http/route";
import { listOutbox } from "@/lib/mail/outbox-read";

export const dynamic = "force-dynamic";

export const GET = route("GET /api/outbox", async () => ({ messages: await listOutbox() }));
