import type { Metadata } from "next";
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { CalibrationView } from "@/components/equipment/calibration-view";
import { CalibrationRecorder, ChainEditor } from "@/components/equipment/chain-editor";
import { ageText, tipText } from "@/components/equipment/format";
import { loadOr404 } from "@/components/equipment/load";
import { Badge } from "@/components/ui/badge";
import { PageHeader, Panel } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { getChain } from "@/lib/equipment/chains";
import { itemName } from "@/lib/equipment/describe";
import { listItems } from "@/lib/equipment/register";
import { equipmentKindLabels } from "@/lib/validation/equipment";

export const metadata: Metadata = { title: "Chain" };

const daysSince = (day: string) => Math.round((Date.now() - Date.parse(`${day}T00:00:00Z`)) / 86_400_000);

export default async function ChainPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requirePageAccess("equipment:read");
  const { chain, calibrations } = await loadOr404((await params).id, getChain);
  const editor = can(user.role, "equipment:edit");
  const calibrates = can(user.role, "equipment:calibrate");
  const today = new Date().toISOString().slice(0, 10);
  const items = editor
    ? (await listItems()).map((i) => ({
        ...i,
        retired: i.outOfServiceOn !== null && i.outOfServiceOn < today,
      }))
    : [];
  const latest = calibrations[0];
  const current = new Set(chain.items.map((i) => i.id));
  return (
    <>
      <PageHeader
        back={{ href: "/equipment", label: "Equipment register" }}
        title={chain.name}
        lead={
          latest
            ? `Last calibrated ${latest.calibratedOn} (${ageText(daysSince(latest.calibratedOn))} ago) with ${latest.testDisc}.`
            : "Not calibrated yet."
        }
        actions={chain.retiredAt ? <Badge>retired</Badge> : null}
      />
      <div className="space-y-6">
        <Panel title="Items, from the disc to the file">
          <ol className="divide-y divide-paper-edge/70 text-sm" data-testid="chain-items">
            {chain.items.map((i) => (
              <li key={i.id} className="flex flex-wrap items-baseline gap-3 py-2">
                <span className="w-32 shrink-0 text-xs uppercase tracking-wide text-ink-faint">
                  {equipmentKindLabels[i.kind]}
                </span>
                <Link
                  href={`/equipment/items/${i.id}`}
                  className="font-medium text-shellac-deep hover:underline"
                >
                  {itemName(i)}
                </Link>
                {i.serial ? <span className="font-mono text-xs text-ink-soft">SN {i.serial}</span> : null}
                {i.kind === "stylus" ? (
                  <span className="text-xs text-ink-soft">
                    {[tipText(i.stylusTipUm), i.stylusShape].filter(Boolean).join(" · ")}
                  </span>
                ) : null}
                {i.outOfServiceOn && i.outOfServiceOn < today ? (
                  <Badge tone="alarm">out of service</Badge>
                ) : null}
              </li>
            ))}
          </ol>
          {chain.notes ? <p className="mt-3 text-sm text-ink-soft">{chain.notes}</p> : null}
          <p className="mt-3 text-xs text-ink-faint">
            {chain.transferCount} transfer{chain.transferCount === 1 ? "" : "s"} made with it · version{" "}
            {chain.version}
          </p>
          {editor ? (
            <div className="mt-4">
              <ChainEditor
                items={items}
                initial={{
                  id: chain.id,
                  version: chain.version,
                  name: chain.name,
                  notes: chain.notes,
                  itemIds: chain.items.map((i) => i.id),
                  retired: chain.retiredAt !== null,
                }}
              />
            </div>
          ) : null}
        </Panel>

        <Panel title="Calibrations" id="calibrations">
          <p className="mb-4 text-sm text-ink-soft">
            A test disc played through the chain, flat. Its measured points are fitted with the curve
            engine&apos;s fit against the curve the disc was cut with: the deviation from that curve is what
            the chain adds. A transfer shows the chain&apos;s latest calibration before it, and how old it
            was.
          </p>
          {calibrates && !chain.retiredAt ? (
            <div className="mb-5">
              <CalibrationRecorder chainId={chain.id} />
            </div>
          ) : null}
          {calibrations.length === 0 ? (
            <p className="text-sm text-ink-faint">No calibration recorded.</p>
          ) : (
            <ul className="space-y-6" data-testid="calibration-list">
              {calibrations.map((k) => {
                const differs = k.itemIds.length !== current.size || k.itemIds.some((id) => !current.has(id));
                return (
                  <li
                    key={k.id}
                    className="rounded-lg border border-paper-edge bg-white p-4"
                    data-testid="calibration"
                  >
                    <div className="mb-3 flex flex-wrap items-baseline gap-x-4 gap-y-1">
                      <span className="font-mono font-semibold">{k.calibratedOn}</span>
                      <span>{k.testDisc}</span>
                      <span className="text-sm text-ink-soft">cut with {k.expectedName}</span>
                      <span className="font-mono text-sm" data-testid="calibration-deviation">
                        {k.deviationRmsDb.toFixed(2)} dB RMS · worst {k.deviationWorstDb.toFixed(2)} dB at{" "}
                        {Math.round(k.deviationWorstHz)} Hz
                      </span>
                      {differs ? <Badge tone="accent">the chain has changed since</Badge> : null}
                      <span className="ml-auto text-xs text-ink-faint">
                        {k.recordedBy} · {when(k.createdAt)}
                      </span>
                    </div>
                    <CalibrationView
                      expected={k.expectedSpec}
                      expectedName={k.expectedName}
                      points={k.points}
                      pointsKind={k.pointsKind}
                      fitParameters={k.fitParameters}
                    />
                    {k.notes ? <p className="mt-2 text-sm text-ink-soft">{k.notes}</p> : null}
                  </li>
                );
              })}
            </ul>
          )}
        </Panel>
      </div>
    </>
  );
}
