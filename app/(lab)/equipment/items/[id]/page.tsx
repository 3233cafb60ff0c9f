import type { Metadata } from "next";
import Link from "next/link";
import { when } from "@/components/catalogue/format";
import { FindingForm } from "@/components/equipment/finding-form";
import { hoursText, tipText } from "@/components/equipment/format";
import { ItemEditor } from "@/components/equipment/item-editor";
import { loadOr404 } from "@/components/equipment/load";
import { Badge } from "@/components/ui/badge";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader, Panel } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { itemName } from "@/lib/equipment/describe";
import { getItem } from "@/lib/equipment/register";
import { equipmentKindLabels } from "@/lib/validation/equipment";

export const metadata: Metadata = { title: "Equipment item" };

function Fact({ k, v, testId }: { k: string; v: React.ReactNode; testId?: string }) {
  return (
    <div className="rounded-md bg-paper-deep/50 px-3 py-2">
      <dt className="text-xs text-ink-soft">{k}</dt>
      <dd className="font-medium" data-testid={testId}>
        {v}
      </dd>
    </div>
  );
}

export default async function ItemPage({ params }: { params: Promise<{ id: string }> }) {
  const user = await requirePageAccess("equipment:read");
  const { item, chains, findings, calibrations } = await loadOr404((await params).id, getItem);
  const editor = can(user.role, "equipment:edit");
  const recallHref = `/equipment/items/${item.id}/transfers`;
  return (
    <>
      <PageHeader
        back={{ href: "/equipment", label: "Equipment register" }}
        title={itemName(item)}
        lead={`${equipmentKindLabels[item.kind]}${item.serial ? ` · serial ${item.serial}` : ""}`}
        actions={
          <LinkButton href={recallHref} variant="primary" data-testid="item-recall">
            Transfers made with it
          </LinkButton>
        }
      />
      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
        <div className="space-y-6">
          <Panel title="The item">
            <dl className="grid grid-cols-2 gap-2 text-sm sm:grid-cols-3">
              <Fact k="Make" v={item.make} />
              <Fact k="Model" v={item.model || "—"} />
              <Fact k="Serial" v={<span className="font-mono">{item.serial || "—"}</span>} />
              <Fact k="In service from" v={item.inServiceOn ?? "—"} />
              <Fact k="Out of service from" v={item.outOfServiceOn ?? "still in service"} />
              {item.kind === "stylus" ? (
                <>
                  <Fact k="Tip" v={tipText(item.stylusTipUm) || "—"} testId="item-tip-text" />
                  <Fact k="Shape" v={item.stylusShape || "—"} />
                  <Fact k="Hours of use" v={hoursText(item.hoursOfUse)} testId="item-hours" />
                </>
              ) : null}
              <Fact k="Transfers made with it" v={item.transferCount} />
            </dl>
            {item.notes ? (
              <p className="mt-3 whitespace-pre-line text-sm text-ink-soft">{item.notes}</p>
            ) : null}
            <p className="mt-3 text-xs text-ink-faint">
              Version {item.version} · registered {when(item.createdAt)} · last changed {when(item.updatedAt)}
              . Every change is in the provenance log.
            </p>
            {editor ? (
              <div className="mt-4">
                <ItemEditor
                  item={{
                    id: item.id,
                    version: item.version,
                    kind: item.kind,
                    make: item.make,
                    model: item.model,
                    serial: item.serial,
                    inServiceOn: item.inServiceOn,
                    outOfServiceOn: item.outOfServiceOn,
                    stylusTipUm: item.stylusTipUm,
                    stylusShape: item.stylusShape,
                    notes: item.notes,
                  }}
                />
              </div>
            ) : null}
          </Panel>
          <Panel title="In chains">
            {chains.length ? (
              <ul className="space-y-1 text-sm">
                {chains.map((c) => (
                  <li key={c.id}>
                    <Link
                      href={`/equipment/chains/${c.id}`}
                      className="text-shellac-deep underline-offset-2 hover:underline"
                    >
                      {c.name}
                    </Link>
                    {c.retiredAt ? <span className="ml-2 text-xs text-ink-faint">retired</span> : null}
                  </li>
                ))}
              </ul>
            ) : (
              <p className="text-sm text-ink-faint">In no chain.</p>
            )}
          </Panel>
          <Panel title="Calibrations of chains holding it">
            {calibrations.length ? (
              <ul className="space-y-1 text-sm">
                {calibrations.map((k) => (
                  <li key={k.id}>
                    <span className="font-mono">{k.calibratedOn}</span> ·{" "}
                    <Link
                      href={`/equipment/chains/${k.chainId}#calibrations`}
                      className="text-shellac-deep hover:underline"
                    >
                      {k.chainName}
                    </Link>{" "}
                    with {k.testDisc} · {k.deviationRmsDb.toFixed(2)} dB RMS from the expected curve
                  </li>
                ))}
              </ul>
            ) : (
              <p className="text-sm text-ink-faint">No chain holding it has been calibrated.</p>
            )}
          </Panel>
        </div>
        <Panel title="Findings">
          <p className="mb-4 text-sm text-ink-soft">
            A fault puts in doubt every transfer made with the item since its last good check: an inspection
            recorded here as sound, or a calibration of a chain that held it, whichever is later (the day of
            that check counted in, since a day does not say which came first).
          </p>
          {findings.length ? (
            <ul className="mb-5 space-y-3" data-testid="finding-list">
              {findings.map((f) => (
                <li key={f.id} className="rounded-lg border border-paper-edge bg-white p-3 text-sm">
                  <div className="flex flex-wrap items-center gap-2">
                    <Badge tone={f.outcome === "fault" ? "alarm" : "ok"}>
                      {f.outcome === "fault" ? "fault" : "good check"}
                    </Badge>
                    <span className="font-mono">{f.foundOn}</span>
                    <span className="text-xs text-ink-faint">recorded by {f.recordedBy}</span>
                  </div>
                  <p className="mt-1">{f.description}</p>
                  {f.window ? (
                    <p className="mt-1 text-xs">
                      Since{" "}
                      {f.window.since
                        ? `${f.window.since.on} (${f.window.since.what})`
                        : "its first transfer"}
                      :{" "}
                      <Link
                        className="font-medium text-shellac-deep underline"
                        href={`${recallHref}?${new URLSearchParams({
                          ...(f.window.from ? { from: f.window.from } : {}),
                          to: f.window.to,
                        }).toString()}`}
                        data-testid="finding-recall"
                      >
                        {f.transfersInDoubt} transfer{f.transfersInDoubt === 1 ? "" : "s"} to check for
                        re-transfer
                      </Link>
                    </p>
                  ) : null}
                </li>
              ))}
            </ul>
          ) : (
            <p className="mb-5 text-sm text-ink-faint">No finding recorded.</p>
          )}
          {editor ? <FindingForm itemId={item.id} /> : null}
        </Panel>
      </div>
    </>
  );
}
