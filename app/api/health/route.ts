import { checkHealth } from "@/lib/health";
import { publicRoute } from "@/lib/http/route";

export const dynamic = "force-dynamic";

export const GET = publicRoute("GET /api/health", async () => {
  const services = await checkHealth();
  const ok = Object.values(services).every((s) => s === "ok");
  return Response.json({ status: ok ? "ok" : "degraded", ...services }, { status: ok ? 200 : 503 });
});
