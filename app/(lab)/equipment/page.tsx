import type { Metadata } from "next";
import Link from "next/link";
import { hoursText, tipText } from "@/components/equipment/format";
import { NewItem } from "@/components/equipment/item-editor";
import { Badge } from "@/components/ui/badge";
import { LinkButton } from "@/components/ui/link-button";
import { PageHeader, Panel } from "@/components/ui/panel";
import { requirePageAccess } from "@/lib/auth/page";
import { can } from "@/lib/auth/permissions";
import { listChains } from "@/lib/equipment/chains";
import { itemName } from "@/lib/equipment/describe";
import { listItems } from "@/lib/equipment/register";
import { chainOrder, equipmentKindLabels } from "@/lib/validation/equipment";

export const metadata: Metadata = { title: "Equipment" };

const today = () => new Date().toISOString().slice(0, 10);

export default async function EquipmentPage() {
  const user = await requirePageAccess("equipment:read");
  const [items, chains] = await Promise.all([listItems(), listChains()]);
  const editor = can(user.role, "equipment:edit");
  const day = today();
  return (
    <>
      <PageHeader
        title="Equipment register"
        lead={
          "The lab's playback and capture equipment, the chains it is used in, their calibrations, " +
          "and which transfers each item made: the record behind every transfer's coding history."
        }
        actions={
          editor ? (
            <LinkButton href="/equipment/chains/new" variant="primary" data-testid="new-chain">
              Save a chain
            </LinkButton>
          ) : null
        }
      />
      <div className="space-y-6">
        <Panel title="Chains">
          {chains.length === 0 ? (
            <p className="text-sm text-ink-faint">
              No chain saved yet. A chain names the items a transfer is made with.
            </p>
          ) : (
            <ul className="grid gap-3 md:grid-cols-2" data-testid="chain-list">
              {chains.map((c) => (
                <li key={c.id} className="rounded-lg border border-paper-edge bg-white p-4">
                  <div className="flex flex-wrap items-baseline justify-between gap-2">
                    <Link
                      href={`/equipment/chains/${c.id}`}
                      className="font-semibold text-shellac-deep underline-offset-2 hover:underline"
                      data-testid="chain-link"
                    >
                      {c.name}
                    </Link>
                    {c.latestCalibration ? (
                      <Badge tone="ok">calibrated {c.latestCalibration.calibratedOn}</Badge>
                    ) : (
                      <Badge tone="accent">not calibrated</Badge>
                    )}
                  </div>
                  <ol className="mt-2 space-y-0.5 text-sm">
                    {c.items.map((i) => (
                      <li key={i.id} className="flex gap-2">
                        <span className="w-28 shrink-0 text-xs uppercase tracking-wide text-ink-faint">
                          {equipmentKindLabels[i.kind]}
                        </span>
                        <span>
                          {itemName(i)}
                          {i.kind === "stylus" && i.stylusTipUm ? (
                            <span className="text-ink-faint"> · {tipText(i.stylusTipUm)}</span>
                          ) : null}
                        </span>
                      </li>
                    ))}
                  </ol>
                  <p className="mt-2 text-xs text-ink-faint">
                    {c.transferCount} transfer{c.transferCount === 1 ? "" : "s"} made with it
                  </p>
                </li>
              ))}
            </ul>
          )}
        </Panel>

        <Panel
          title="Items"
          actions={
            editor ? (
              <span className="text-xs text-ink-faint">Admins and engineers keep the register</span>
            ) : null
          }
        >
          {editor ? (
            <div className="mb-5">
              <NewItem />
            </div>
          ) : null}
          {items.length === 0 ? (
            <p className="text-sm text-ink-faint">The register is empty.</p>
          ) : (
            <div className="overflow-x-auto">
              <table className="w-full text-left text-sm" data-testid="item-table">
                <caption className="sr-only">Items in the register</caption>
                <thead className="text-xs uppercase tracking-wide text-ink-soft">
                  <tr className="border-b border-paper-edge">
                    <th scope="col" className="py-2 pr-3 font-semibold">
                      Item
                    </th>
                    <th scope="col" className="py-2 pr-3 font-semibold">
                      Serial
                    </th>
                    <th scope="col" className="py-2 pr-3 font-semibold">
                      Details
                    </th>
                    <th scope="col" className="py-2 pr-3 font-semibold">
                      In chains
                    </th>
                    <th scope="col" className="py-2 pr-3 text-right font-semibold">
                      Use
                    </th>
                    <th scope="col" className="py-2 font-semibold">
                      State
                    </th>
                  </tr>
                </thead>
                {chainOrder.map((kind) => {
                  const ofKind = items.filter((i) => i.kind === kind);
                  if (!ofKind.length) return null;
                  return (
                    <tbody key={kind}>
                      <tr>
                        <th
                          scope="rowgroup"
                          colSpan={6}
                          className="pb-1 pt-4 text-xs font-semibold uppercase tracking-wide text-groove"
                        >
                          {equipmentKindLabels[kind]}
                        </th>
                      </tr>
                      {ofKind.map((i) => {
                        const retired = i.outOfServiceOn !== null && i.outOfServiceOn < day;
                        const fault = i.latestFinding?.outcome === "fault";
                        return (
                          <tr
                            key={i.id}
                            className="border-t border-paper-edge/70 align-top"
                            data-testid="item-row"
                          >
                            <td className="py-2 pr-3">
                              <Link
                                href={`/equipment/items/${i.id}`}
                                className="font-medium text-shellac-deep underline-offset-2 hover:underline"
                                data-testid="item-link"
                              >
                                {itemName(i)}
                              </Link>
                              {i.notes ? (
                                <p className="line-clamp-1 text-xs text-ink-faint">{i.notes}</p>
                              ) : null}
                            </td>
                            <td className="py-2 pr-3 font-mono text-xs">{i.serial || "—"}</td>
                            <td className="py-2 pr-3 text-xs">
                              {i.kind === "stylus"
                                ? [tipText(i.stylusTipUm), i.stylusShape].filter(Boolean).join(" · ") || "—"
                                : "—"}
                            </td>
                            <td className="py-2 pr-3 text-xs">{i.chains.join(", ") || "—"}</td>
                            <td className="py-2 pr-3 text-right font-mono text-xs">
                              {i.kind === "stylus"
                                ? hoursText(i.hoursOfUse)
                                : `${i.transferCount} transfer${i.transferCount === 1 ? "" : "s"}`}
                            </td>
                            <td className="py-2">
                              {fault ? (
                                <Badge tone="alarm">fault {i.latestFinding?.foundOn}</Badge>
                              ) : retired ? (
                                <Badge>out of service</Badge>
                              ) : (
                                <Badge tone="ok">in service</Badge>
                              )}
                            </td>
                          </tr>
                        );
                      })}
                    </tbody>
                  );
                })}
              </table>
            </div>
          )}
        </Panel>
      </div>
    </>
  );
}
