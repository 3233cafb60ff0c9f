"use client";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { type ReactNode, useState } from "react";
import { LabelImages } from "@/components/labels/label-images";
import { Panel } from "@/components/ui/panel";
import { can } from "@/lib/auth/permissions";
import type { Role } from "@/lib/auth/roles";
import { fetchJson } from "@/lib/http/client";
import { AssignControl } from "./assign-control";
import { fieldText } from "./fields";
import { when } from "./format";
import { HandlingCautions } from "./handling-cautions";
import { ProvenanceTimeline } from "./provenance-timeline";
import { SideSteps, type Step } from "./side-steps";
import { StatusBadge } from "./status-badge";
import type { DiscJson } from "./types";

export function DiscDetail({
  initial,
  steps,
  user,
  canAssign,
}: {
  initial: DiscJson;
  steps: readonly Step[];
  user: { id: string; role: Role };
  canAssign: boolean;
}) {
  const queryClient = useQueryClient();
  const disc = useQuery({
    queryKey: ["disc", initial.id],
    queryFn: () => fetchJson<{ disc: DiscJson }>(`/api/discs/${initial.id}`),
    initialData: { disc: initial },
  }).data.disc;
  const refresh = () => {
    void queryClient.invalidateQueries({ queryKey: ["disc", disc.id] });
    void queryClient.invalidateQueries({ queryKey: ["disc-events", disc.id] });
    void queryClient.invalidateQueries({ queryKey: ["discs"] });
    void queryClient.invalidateQueries({ queryKey: ["queue"] });
  };
  const accessionName = (id: string) => (id === disc.accessionId ? disc.accessionIdentifier : undefined);
  const years =
    disc.recordedFromYear && disc.recordedFromYear === disc.recordedToYear
      ? String(disc.recordedFromYear)
      : disc.recordedFromYear || disc.recordedToYear
        ? [disc.recordedFromYear ?? "?", disc.recordedToYear ?? "?"].join("–")
        : null;

  return (
    <div className="space-y-6">
      <HandlingCautions
        format={disc.format}
        base={disc.base}
        conditionFlags={disc.conditionFlags}
        conditionGrade={disc.conditionGrade}
      />

      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_26rem]">
        <div className="space-y-6">
          <Panel title="Sides">
            {disc.sides.length ? (
              <div className="-m-5 overflow-x-auto">
                <table className="w-full text-left text-sm" aria-label="Sides" data-testid="sides-table">
                  <thead className="bg-paper-deep/60 text-xs uppercase tracking-wide text-ink-soft">
                    <tr>
                      <th scope="col" className="px-3 py-2.5 font-semibold">
                        Side
                      </th>
                      <th scope="col" className="px-3 py-2.5 font-semibold">
                        Matrix · take
                      </th>
                      <th scope="col" className="px-3 py-2.5 font-semibold">
                        Title · performers
                      </th>
                      <th scope="col" className="px-3 py-2.5 font-semibold">
                        Status
                      </th>
                      <th scope="col" className="px-3 py-2.5 font-semibold">
                        Next step
                      </th>
                    </tr>
                  </thead>
                  <tbody>
                    {disc.sides.map((s) => (
                      <tr
                        key={s.id}
                        className="border-t border-paper-edge/70 align-top"
                        data-testid={`side-${s.designation}`}
                      >
                        <td className="px-3 py-3 font-mono text-base font-semibold">
                          {s.assignedEngineerId === user.id ? (
                            <a
                              href={`/bench/${s.id}`}
                              className="text-shellac-deep underline decoration-shellac/30 underline-offset-2 hover:decoration-shellac"
                              aria-label={`Side ${s.designation} on the bench`}
                            >
                              {s.designation}
                            </a>
                          ) : (
                            s.designation
                          )}
                        </td>
                        <td className="px-3 py-3 font-mono text-xs">
                          <p>{s.matrixNumber || "—"}</p>
                          {s.take ? <p className="text-ink-faint">take {s.take}</p> : null}
                        </td>
                        <td className="px-3 py-3">
                          <p>{s.title || <span className="text-ink-faint">untitled</span>}</p>
                          {s.performers ? <p className="text-xs text-ink-soft">{s.performers}</p> : null}
                          {s.notes ? <p className="mt-1 text-xs text-ink-faint">{s.notes}</p> : null}
                        </td>
                        <td className="px-3 py-3">
                          <StatusBadge status={s.status} />
                          {s.assignedEngineerName ? (
                            <p className="mt-1 text-xs text-ink-soft">with {s.assignedEngineerName}</p>
                          ) : null}
                          {s.status === "returned" && s.returnReason ? (
                            <p
                              className="mt-1 max-w-56 rounded bg-alarm-wash px-2 py-1 text-xs text-alarm"
                              data-testid={`return-reason-${s.designation}`}
                            >
                              Returned: {s.returnReason}
                            </p>
                          ) : null}
                        </td>
                        <td className="px-3 py-3">
                          <SideSteps side={s} steps={steps} user={user} onMoved={refresh} />
                        </td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </div>
            ) : (
              <p className="text-sm text-ink-faint">No sides logged yet.</p>
            )}
          </Panel>

          <Panel title="Label images">
            <LabelImages
              discId={disc.id}
              sides={disc.sides.map((s) => ({ id: s.id, designation: s.designation }))}
              canAdd={can(user.role, "catalogue:edit")}
            />
          </Panel>

          {canAssign ? (
            <Panel title="Assign for transfer">
              <AssignSides sides={disc.sides} onAssigned={refresh} />
            </Panel>
          ) : null}

          <Panel title="Provenance">
            <ProvenanceTimeline discId={disc.id} accessionName={accessionName} />
          </Panel>
        </div>

        <Panel title="The disc" className="self-start">
          <dl
            className="grid grid-cols-[9rem_minmax(0,1fr)] gap-x-4 gap-y-2 text-sm"
            data-testid="disc-fields"
          >
            <Row label="Shelf mark">
              <span className="font-mono">{disc.shelfMark}</span>
            </Row>
            <Row label="Accession">
              <span className="font-mono">{disc.accessionIdentifier}</span>
            </Row>
            <Row label="Label">{fieldText("labelName", disc.labelName)}</Row>
            <Row label="Catalogue no.">
              <span className="font-mono">{fieldText("catalogueNumber", disc.catalogueNumber)}</span>
            </Row>
            <Row label="Format">{fieldText("format", disc.format)}</Row>
            <Row label="Base">{fieldText("base", disc.base)}</Row>
            <Row label="Diameter">{fieldText("diameterIn", disc.diameterIn)}</Row>
            <Row label="Nominal speed">{fieldText("nominalSpeedRpm", disc.nominalSpeedRpm)}</Row>
            <Row label="Groove">{fieldText("groove", disc.groove)}</Row>
            <Row label="Cut">{fieldText("cut", disc.cut)}</Row>
            <Row label="Recorded on">{fieldText("recordingDate", disc.recordingDate)}</Row>
            <Row label="Recorded in">{years ?? "—"}</Row>
            <Row label="Condition">{fieldText("conditionGrade", disc.conditionGrade)}</Row>
            <Row label="Condition flags">{fieldText("conditionFlags", disc.conditionFlags)}</Row>
            <Row label="Condition notes">
              <span className="whitespace-pre-line">{fieldText("conditionNotes", disc.conditionNotes)}</span>
            </Row>
            <Row label="Handling notes">
              <span className="whitespace-pre-line">{fieldText("handlingNotes", disc.handlingNotes)}</span>
            </Row>
            <Row label="Record version">
              <span className="font-mono">{disc.version}</span>
            </Row>
            <Row label="Created">{when(disc.createdAt)}</Row>
            <Row label="Last changed">{when(disc.updatedAt)}</Row>
          </dl>
        </Panel>
      </div>
    </div>
  );
}

const assignable = new Set(["catalogued", "returned", "assigned"]);

/** Assigns the sides ticked here (every waiting side at first) to one engineer. */
function AssignSides({ sides, onAssigned }: { sides: DiscJson["sides"]; onAssigned: () => void }) {
  const waiting = sides.filter((s) => assignable.has(s.status));
  const [unticked, setUnticked] = useState<Set<string>>(new Set());
  const chosen = waiting.filter((s) => !unticked.has(s.id));
  if (!waiting.length)
    return (
      <p className="text-sm text-ink-soft">
        Every side of this disc is further along than assigning; nothing here to assign.
      </p>
    );
  return (
    <div className="space-y-3">
      <fieldset>
        <legend className="mb-2 text-sm text-ink-soft">
          Sides to assign (catalogued, returned or already assigned; sides further along stay as they are):
        </legend>
        <div className="flex flex-wrap gap-x-5 gap-y-2">
          {waiting.map((s) => (
            <label key={s.id} className="flex items-center gap-2 text-sm">
              <input
                type="checkbox"
                checked={!unticked.has(s.id)}
                onChange={(e) =>
                  setUnticked((u) => {
                    const next = new Set(u);
                    if (e.target.checked) next.delete(s.id);
                    else next.add(s.id);
                    return next;
                  })
                }
                className="h-4 w-4 accent-shellac"
                data-testid={`assign-side-${s.designation}`}
              />
              <span className="font-mono font-semibold">{s.designation}</span>
              <span className="text-xs text-ink-soft">
                {s.title || "untitled"}
                {s.assignedEngineerName ? ` · with ${s.assignedEngineerName}` : ""}
              </span>
            </label>
          ))}
        </div>
      </fieldset>
      <AssignControl
        sideIds={chosen.map((s) => s.id)}
        what={
          chosen.length === waiting.length && waiting.length > 1
            ? "every waiting side"
            : chosen.length === 1
              ? `side ${chosen[0].designation}`
              : `${chosen.length} sides`
        }
        testId="disc-assign"
        onAssigned={() => {
          setUnticked(new Set());
          onAssigned();
        }}
      />
    </div>
  );
}

function Row({ label, children }: { label: string; children: ReactNode }) {
  return (
    <>
      <dt className="text-ink-soft">{label}</dt>
      <dd className="min-w-0 break-words">{children}</dd>
    </>
  );
}
