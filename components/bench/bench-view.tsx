"use client";
/**
 * The transfer bench for one side: choose and record the curve, compare
 * candidates by eye and by ear, upload the flat transfer, render the access copy.
 */
import { useCallback, useId, useMemo, useState } from "react";
import { SideHeader } from "@/components/catalogue/side-header";
import { CURVE_COLORS } from "@/components/curves/plot-format";
import { ResponsePlot } from "@/components/curves/response-plot";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { usePresets } from "@/hooks/use-presets";
import { useSide } from "@/hooks/use-side";
import { defaultChannelMode } from "@/lib/audition/channel-mode";
import { curveChoiceName, type CurveSpec, mergeCurve } from "@/lib/curves";
import { statusLabels } from "@/lib/validation/catalogue";
import { curveChoosableStatuses, uploadableStatuses } from "@/lib/validation/transfers";
import { AuditionPanel } from "./audition-panel";
import { ChoiceHistory } from "./choice-history";
import { CurveChoiceForm } from "./curve-choice-form";
import { RenderPanel } from "./render-panel";
import { TransfersList } from "./transfers-list";
import type { Candidate, ChannelMode } from "./types";
import { UploadPanel } from "./upload-panel";

const MAX_CANDIDATES = 4;

export function BenchView({ sideId, userId, extraSideIds }: { sideId: string; userId: string; extraSideIds: string[] }) {
  const uid = useId();
  const { side, choices, transfers } = useSide(sideId);
  const presets = usePresets();

  const [editSpec, setEditSpec] = useState<CurveSpec | null>(null);
  const onEffectiveSpec = useCallback((s: CurveSpec | null) => setEditSpec(s), []);
  const [extraPresets, setExtraPresets] = useState<string[]>([]);
  const [addPreset, setAddPreset] = useState("");
  const [hidden, setHidden] = useState<Set<string>>(new Set());
  const [pickedTransfer, setPickedTransfer] = useState<string | null>(null);
  const [modeChoice, setModeChoice] = useState<ChannelMode | null>(null);

  const current = choices.data?.choices[0] ?? null;
  const data = side.data;
  const speeds = current ? { cut: current.cutSpeedRpm, transfer: current.transferSpeedRpm } : { cut: data?.disc.nominalSpeedRpm ?? 78, transfer: data?.disc.nominalSpeedRpm ?? 78 };

  // Candidates: the recorded choice, the form's edits, and presets added for comparison (at the same speeds).
  const candidates = useMemo<Candidate[]>(() => {
    const out: Candidate[] = [];
    if (current) out.push({ id: "current", label: `Recorded: ${curveChoiceName(current)}`, spec: current.spec });
    if (editSpec && (!current || JSON.stringify(editSpec) !== JSON.stringify(current.spec))) out.push({ id: "edits", label: "Edits in the form", spec: editSpec });
    for (const id of extraPresets) {
      const p = presets.data?.presets.find((x) => x.id === id);
      if (p) out.push({ id: `preset:${p.id}`, label: curveChoiceName({ presetName: p.name, presetVersion: p.version, cutSpeedRpm: speeds.cut, transferSpeedRpm: speeds.transfer }), spec: mergeCurve(p.spec, {}, speeds.cut, speeds.transfer) });
    }
    return out.filter((c) => !hidden.has(c.id)).slice(0, MAX_CANDIDATES);
  }, [current, editSpec, extraPresets, presets.data, speeds.cut, speeds.transfer, hidden]);

  const newest = transfers.data?.transfers[0] ?? null;
  const auditioned = transfers.data?.transfers.find((t) => t.id === pickedTransfer) ?? newest;
  const suggestion = data ? defaultChannelMode(data.disc.cut, Number(auditioned?.channels ?? 2)) : null;
  const channelMode: ChannelMode = modeChoice ?? suggestion?.mode ?? "both";
  const channelWhy = modeChoice && modeChoice !== suggestion?.mode ? `Changed from the suggestion (${suggestion?.mode}). ${suggestion?.why ?? ""}` : (suggestion?.why ?? "");

  if (side.isLoading) return <p className="text-ink-faint">Loading the side…</p>;
  if (side.error || !data) return <Notice tone="error" title="This side could not be opened">{side.error?.message ?? "Unknown side."}</Notice>;
  const { disc } = data;
  const s = data.side;
  const mine = s.assignedEngineerId === userId;
  const curveChosen = !!current && s.status !== "assigned" && s.status !== "returned";

  return (
    <div className="space-y-6" data-testid="bench">
      <SideHeader
        disc={disc}
        side={s}
        back={{ href: "/bench", label: "My bench queue" }}
        testId="bench-title"
        aside={s.status === "returned" && s.returnReason ? <p className="max-w-72 rounded border-l-2 border-alarm bg-alarm-wash px-2 py-1 text-xs text-alarm">Returned: {s.returnReason}</p> : null}
      />
      {!mine ? <Notice tone="info" title="Not assigned to you">You can look and listen; choices, uploads and renders are for the engineer this side is assigned to ({s.assignedEngineerName ?? "nobody yet"}).</Notice> : null}

      <div className="grid gap-6 xl:grid-cols-[27rem_minmax(0,1fr)]">
        <div className="space-y-6">
          <Panel title="Choose the curve">
            {choices.isLoading ? (
              <p className="text-sm text-ink-faint">Loading…</p>
            ) : curveChoosableStatuses.has(s.status) ? (
              <CurveChoiceForm key={current?.id ?? "none"} data={data} current={current} extraSideIds={extraSideIds} onEffectiveSpec={onEffectiveSpec} />
            ) : (
              // The server refuses a new choice here; the recorded one stands below.
              <Notice tone="info" title={`${statusLabels[s.status]}: the curve is settled`} testId="choice-locked">
                {s.status === "in_review" ? "A curator is reviewing this side. Its curve and transfer can change again only if the curator returns it." : "This side's curve can no longer change."}
              </Notice>
            )}
          </Panel>
          <Panel title="Curves recorded for this side">
            <ChoiceHistory choices={choices.data?.choices} loading={choices.isLoading} />
          </Panel>
        </div>

        <div className="min-w-0 space-y-6">
          <Panel title="Compare curves">
            <div className="space-y-4">
              <ul className="flex flex-wrap gap-2" data-testid="candidate-list" aria-label="Curves compared">
                {candidates.map((c, i) => (
                  <li key={c.id} className="inline-flex items-center gap-2 rounded-full border border-paper-edge bg-white py-1 pl-3 pr-1 text-sm">
                    <span aria-hidden className="h-2.5 w-2.5 rounded-full" style={{ background: CURVE_COLORS[i % CURVE_COLORS.length] }} />
                    {c.label}
                    <button
                      type="button"
                      className="rounded-full px-2 text-ink-faint hover:bg-paper-deep hover:text-ink"
                      aria-label={`Stop comparing ${c.label}`}
                      onClick={() => {
                        if (c.id.startsWith("preset:")) setExtraPresets((l) => l.filter((p) => `preset:${p}` !== c.id));
                        else setHidden((h) => new Set(h).add(c.id));
                      }}
                    >
                      ×
                    </button>
                  </li>
                ))}
                {!candidates.length ? <li className="text-sm text-ink-faint">Choose a preset in the form, or add one here, to see and hear it.</li> : null}
              </ul>
              <div className="flex flex-wrap items-end gap-2">
                <div className="space-y-1">
                  <label htmlFor={`${uid}-add`} className="block text-xs font-medium text-ink-soft">
                    Compare with a preset
                  </label>
                  <select id={`${uid}-add`} value={addPreset} onChange={(e) => setAddPreset(e.target.value)} className="h-9 w-72 rounded-md border border-paper-edge bg-white px-2 text-sm" data-testid="candidate-add-select">
                    <option value="">Choose a preset…</option>
                    {presets.data?.presets
                      .filter((p) => !extraPresets.includes(p.id))
                      .map((p) => (
                        <option key={p.id} value={p.id}>
                          {p.name}
                        </option>
                      ))}
                  </select>
                </div>
                <Button
                  type="button"
                  variant="secondary"
                  disabled={!addPreset || candidates.length >= MAX_CANDIDATES}
                  onClick={() => {
                    setExtraPresets((l) => [...l, addPreset]);
                    setAddPreset("");
                  }}
                  data-testid="candidate-add"
                >
                  Add
                </Button>
                {hidden.size ? (
                  <Button type="button" variant="quiet" onClick={() => setHidden(new Set())}>
                    Show the recorded and edited curves again
                  </Button>
                ) : null}
                <p className="text-xs text-ink-faint">Up to {MAX_CANDIDATES} curves. Presets are shown at the choice&apos;s speeds.</p>
              </div>
              {candidates.length ? <ResponsePlot curves={candidates} height={340} showPhase={false} /> : null}
            </div>
          </Panel>

          <Panel title="Flat transfer">
            <UploadPanel sideId={sideId} curveChosen={curveChosen} canUpload={mine && uploadableStatuses.has(s.status)} />
          </Panel>

          <Panel title="Transfers of this side">
            <TransfersList transfers={transfers.data?.transfers} loading={transfers.isLoading} selectedId={auditioned?.id ?? null} onSelect={setPickedTransfer} />
          </Panel>

          <Panel title="Listen">
            <AuditionPanel transfer={auditioned} candidates={candidates} channelMode={channelMode} onChannelMode={setModeChoice} channelWhy={channelWhy} />
          </Panel>

          <Panel title="Access copy">
            <RenderPanel sideId={sideId} sideStatus={s.status} channels={newest ? Number(newest.channels) : null} transferRateHz={newest ? Number(newest.sampleRateHz) : null} channelMode={channelMode} onChannelMode={setModeChoice} channelWhy={channelWhy} canRender={mine} />
          </Panel>
        </div>
      </div>
    </div>
  );
}

