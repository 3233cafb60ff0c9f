import { recordCalibration } from "@/lib/equipment/chains";
import { route } from "@/lib/http/route";

export const dynamic = "force-dynamic";

/** Records a calibration of the chain: the test disc's measured points, fitted against the curve it was cut with. */
export const POST = route("POST /api/equipment/chains/[id]/calibrations", async (req, { params, user }) =>
  Response.json(
    { calibration: await recordCalibration(user, String(params.id), await req.json().catch(() => ({}))) },
    { status: 201 },
  ),
);
