"use client";
/**
 * The transfer bench for one side, in the archive's order: (1) the flat transfer, which
 * never depends on the curve; (2) candidate curves compared by eye and by ear on that
 * very transfer, which records nothing; (3) the curve recorded, with its evidence; (4) the
 * access copy rendered from exactly that transfer and curve, heard against the flat
 * transfer through the curve, and sent for review.
 */
import { useCallback, useId, useMemo, useState } from "react";
import { SideHeader } from "@/components/catalogue/side-header";
import { CURVE_COLORS } from "@/components/curves/plot-format";
import { PresetPicker } from "@/components/curves/preset-picker";
import { ResponsePlot } from "@/components/curves/response-plot";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { LabelImages } from "@/components/labels/label-images";
import { Panel } from "@/components/ui/panel";
import { useChannelMode } from "@/hooks/use-channel-mode";
import { usePresets } from "@/hooks/use-presets";
import { useSide } from "@/hooks/use-side";
import { curveChoiceName, type CurveSpec } from "@/lib/curves";
import { statusLabels } from "@/lib/validation/catalogue";
import { curveChoosableStatuses, uploadableStatuses } from "@/lib/validation/transfers";
import { AccessCopyCompare } from "./access-copy-compare";
import { AuditionPanel } from "./audition-panel";
import { type BenchStep, BenchSteps, nextAtBench } from "./bench-steps";
import { choiceCandidate, presetCandidate } from "./candidates";
import { ChoiceHistory } from "./choice-history";
import { type ChoicePrefill, CurveChoiceForm } from "./curve-choice-form";
import { RenderPanel } from "./render-panel";
import { TransfersList } from "./transfers-list";
import type { Candidate } from "./types";
import { UploadPanel } from "./upload-panel";

const MAX_CANDIDATES = 4;

export function BenchView({
  sideId,
  userId,
  extraSideIds,
}: {
  sideId: string;
  userId: string;
  extraSideIds: string[];
}) {
  const uid = useId();
  const { side, choices, transfers, now } = useSide(sideId);
  const presets = usePresets();

  const [editSpec, setEditSpec] = useState<CurveSpec | null>(null);
  const onEffectiveSpec = useCallback((s: CurveSpec | null) => setEditSpec(s), []);
  const [extraPresets, setExtraPresets] = useState<string[]>([]);
  const [hidden, setHidden] = useState<Set<string>>(new Set());
  const [pickedTransfer, setPickedTransfer] = useState<string | null>(null);

  const data = side.data;
  const { choice: current, render: currentRender } = now;
  // A curve picked in the listening panel, for the form (only while the recorded choice is the one it was picked against).
  const [prefill, setPrefill] = useState<(ChoicePrefill & { against: string | null }) | null>(null);
  if (prefill && prefill.against !== (current?.id ?? null)) setPrefill(null);
  const speeds = current
    ? { cut: current.cutSpeedRpm, transfer: current.transferSpeedRpm }
    : { cut: data?.disc.nominalSpeedRpm ?? 78, transfer: data?.disc.nominalSpeedRpm ?? 78 };

  // Candidates: the recorded choice, the form's edits, and presets added for comparison (at the same speeds).
  const candidates = useMemo<Candidate[]>(() => {
    const out: Candidate[] = [];
    if (current) out.push(choiceCandidate("current", "Recorded", current));
    if (editSpec && (!current || JSON.stringify(editSpec) !== JSON.stringify(current.spec)))
      out.push({ id: "edits", label: "Edits in the form", spec: editSpec });
    for (const id of extraPresets) {
      const p = presets.data?.presets.find((x) => x.id === id);
      if (p) out.push(presetCandidate(p, { cut: speeds.cut, transfer: speeds.transfer }));
    }
    return out.filter((c) => !hidden.has(c.id)).slice(0, MAX_CANDIDATES);
  }, [current, editSpec, extraPresets, presets.data, speeds.cut, speeds.transfer, hidden]);

  const newest = now.transfer ?? transfers.data?.transfers[0] ?? null;
  const auditioned = transfers.data?.transfers.find((t) => t.id === pickedTransfer) ?? newest;
  const { channelMode, setChannelMode, channelWhy } = useChannelMode({
    cut: data?.disc.cut,
    channels: auditioned ? Number(auditioned.channels) : undefined,
  });

  if (side.isLoading) return <p className="text-ink-faint">Loading the side…</p>;
  if (side.error || !data)
    return (
      <Notice tone="error" title="This side could not be opened">
        {side.error?.message ?? "Unknown side."}
      </Notice>
    );
  const { disc } = data;
  const s = data.side;
  const mine = s.assignedEngineerId === userId;
  const canChoose = mine && curveChoosableStatuses.has(s.status);
  const currentTransfer = now.transfer;
  const steps: BenchStep[] = [
    {
      id: "bench-transfer",
      label: "Flat transfer",
      done: !!s.currentTransferId,
      detail: currentTransfer?.fileName ?? null,
    },
    {
      id: "bench-listen",
      label: "Listen and compare",
      done: false,
      detail: candidates.length
        ? `${candidates.length} curve${candidates.length === 1 ? "" : "s"} compared`
        : null,
    },
    {
      id: "bench-step-choose",
      label: "Record the curve",
      done: !!current,
      detail: current ? curveChoiceName(current) : null,
    },
    {
      id: "bench-access",
      label: "Access copy",
      done: !!currentRender,
      detail: currentRender ? `${currentRender.bitDepth}-bit` : null,
    },
  ];
  const next = nextAtBench({
    status: s.status,
    mine,
    assignee: s.assignedEngineerName ?? null,
    hasTransfer: !!s.currentTransferId,
    hasCurve: !!current,
    hasAccessCopy: !!currentRender,
  });
  const recordFromListening = (candidateId: string, evidence: string) => {
    const nonce = Date.now();
    if (candidateId.startsWith("preset:")) {
      const p = presets.data?.presets.find((x) => `preset:${x.id}` === candidateId);
      setPrefill({
        nonce,
        against: current?.id ?? null,
        preset: p ? { id: p.id, version: p.currentVersion } : null,
        evidence,
      });
    } else if (candidateId === "current" && current?.presetId && current.presetVersion) {
      setPrefill({
        nonce,
        against: current.id,
        preset: { id: current.presetId, version: current.presetVersion },
        overrides: current.overrides,
        evidence,
      });
    } else {
      // The form's own edits (or own values): the curve stays as the form has it.
      setPrefill({ nonce, against: current?.id ?? null, preset: null, evidence });
    }
    document.getElementById("bench-step-choose")?.scrollIntoView({ behavior: "smooth", block: "start" });
  };

  return (
    <div className="space-y-6" data-testid="bench">
      <SideHeader
        disc={disc}
        side={s}
        back={{ href: "/bench", label: "My bench queue" }}
        testId="bench-title"
        aside={
          s.status === "returned" && s.returnReason ? (
            <p className="max-w-72 rounded border-l-2 border-alarm bg-alarm-wash px-2 py-1 text-xs text-alarm">
              Returned: {s.returnReason}
            </p>
          ) : null
        }
      />
      {!mine ? (
        <Notice tone="info" title="Not assigned to you">
          You can look and listen; choices, uploads and renders are for the engineer this side is assigned to
          ({s.assignedEngineerName ?? "nobody yet"}).
        </Notice>
      ) : null}

      <BenchSteps steps={steps} next={next} />

      {/*
        Wide screens: the transfer and the listening on the left, and the curve's form with its
        history in a pane on the right that stays beside them while the page scrolls (it scrolls
        on its own when taller than the window); the access copy below, across both. Narrow
        screens: one column, in order.
      */}
      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_27rem]">
        <div className="min-w-0 space-y-6">
          <Panel id="bench-transfer" title="1 · Flat transfer">
            <div className="space-y-5">
              <UploadPanel
                sideId={sideId}
                canUpload={mine && uploadableStatuses.has(s.status)}
                replaces={!!s.currentTransferId}
              />
              <div className="min-w-0 space-y-2 border-t border-paper-edge pt-4">
                <h3 className="font-sans text-sm font-semibold">Transfers of this side</h3>
                <TransfersList
                  transfers={transfers.data?.transfers}
                  loading={transfers.isLoading}
                  selectedId={auditioned?.id ?? null}
                  onSelect={setPickedTransfer}
                  currentId={s.currentTransferId}
                />
              </div>
            </div>
          </Panel>

          <Panel id="bench-listen" title="2 · Listen and compare">
            <div className="space-y-5">
              <p className="text-xs text-ink-faint">
                Listening records nothing: compare as many curves as you like on the flat transfer, then
                record the one you choose.
              </p>
              <ul className="flex flex-wrap gap-2" data-testid="candidate-list" aria-label="Curves compared">
                {candidates.map((c, i) => (
                  <li
                    key={c.id}
                    className="inline-flex items-center gap-2 rounded-full border border-paper-edge bg-white py-1 pl-3 pr-1 text-sm"
                  >
                    <span
                      aria-hidden
                      className="h-2.5 w-2.5 rounded-full"
                      style={{ background: CURVE_COLORS[i % CURVE_COLORS.length] }}
                    />
                    {c.label}
                    <button
                      type="button"
                      className="rounded-full px-2 text-ink-faint hover:bg-paper-deep hover:text-ink"
                      aria-label={`Stop comparing ${c.label}`}
                      onClick={() => {
                        if (c.id.startsWith("preset:"))
                          setExtraPresets((l) => l.filter((p) => `preset:${p}` !== c.id));
                        else setHidden((h) => new Set(h).add(c.id));
                      }}
                    >
                      ×
                    </button>
                  </li>
                ))}
                {!candidates.length ? (
                  <li className="text-sm text-ink-faint">
                    Add a preset here, or set values in the form, to see and hear it.
                  </li>
                ) : null}
              </ul>
              <div className="flex flex-wrap items-end gap-2">
                <PresetPicker
                  label="Compare with a preset"
                  addLabel="Add"
                  exclude={extraPresets}
                  full={candidates.length >= MAX_CANDIDATES}
                  onAdd={(p) => setExtraPresets((l) => [...l, p.id])}
                />
                {hidden.size ? (
                  <Button type="button" variant="quiet" onClick={() => setHidden(new Set())}>
                    Show the recorded and edited curves again
                  </Button>
                ) : null}
                <p className="text-xs text-ink-faint">
                  Up to {MAX_CANDIDATES} curves. Presets are shown at the choice&apos;s speeds.
                </p>
              </div>
              {candidates.length ? <ResponsePlot curves={candidates} height={300} showPhase={false} /> : null}
              <div className="border-t border-paper-edge pt-5">
                <AuditionPanel
                  transfer={auditioned}
                  candidates={candidates}
                  channelMode={channelMode}
                  onChannelMode={setChannelMode}
                  channelWhy={channelWhy}
                  onRecord={canChoose ? recordFromListening : undefined}
                />
              </div>
            </div>
          </Panel>
        </div>

        <div
          className="min-w-0 space-y-6 xl:sticky xl:top-14 xl:max-h-[calc(100vh-4.5rem)] xl:self-start xl:overflow-y-auto xl:rounded-xl xl:pb-1"
          data-testid="bench-curve-pane"
        >
          <Panel id="bench-label" title="The label">
            <LabelImages discId={disc.id} sides={[]} canAdd={false} onlySideId={sideId} />
          </Panel>
          <Panel id="bench-step-choose" title="3 · Record the curve">
            {choices.isLoading ? (
              <p className="text-sm text-ink-faint">Loading…</p>
            ) : curveChoosableStatuses.has(s.status) ? (
              <div className="space-y-4">
                {!s.currentTransferId ? (
                  <p className="rounded-md bg-paper-deep/60 px-3 py-2 text-xs text-ink-soft">
                    No flat transfer yet. You may record a curve now (from published guidance for the label,
                    say); the transfer does not wait for it, and you can still change the curve after
                    listening.
                  </p>
                ) : null}
                <CurveChoiceForm
                  key={current?.id ?? "none"}
                  data={data}
                  current={current}
                  extraSideIds={extraSideIds}
                  measuredSpeedRpm={newest?.measuredSpeedRpm != null ? Number(newest.measuredSpeedRpm) : null}
                  onEffectiveSpec={onEffectiveSpec}
                  prefill={prefill && prefill.against === (current?.id ?? null) ? prefill : null}
                />
              </div>
            ) : (
              // The server refuses a new choice here; the recorded one stands below.
              <Notice
                tone="info"
                title={`${statusLabels[s.status]}: the curve is settled`}
                testId="choice-locked"
              >
                {s.status === "in_review"
                  ? "A curator is reviewing this side. Its curve and transfer can change again only if the curator returns it."
                  : "This side's curve can no longer change."}
              </Notice>
            )}
          </Panel>
          <div id="bench-history" className="scroll-mt-20">
            <ChoiceHistory choices={choices.data?.choices} loading={choices.isLoading} />
          </div>
        </div>
      </div>

      <Panel id="bench-access" title="4 · Access copy">
        <div className="space-y-6">
          <RenderPanel
            sideId={sideId}
            sideStatus={s.status}
            channels={newest ? Number(newest.channels) : null}
            transferRateHz={newest ? Number(newest.sampleRateHz) : null}
            channelMode={channelMode}
            onChannelMode={setChannelMode}
            channelWhy={channelWhy}
            canRender={mine}
            currentWork={{ transferId: s.currentTransferId, curveChoiceId: s.currentCurveChoiceId }}
          />
          {currentRender && newest && current ? (
            <section className="space-y-2 border-t border-paper-edge pt-5" aria-labelledby={`${uid}-ab`}>
              <h3 id={`${uid}-ab`} className="font-sans text-sm font-semibold">
                Hear the access copy against the flat transfer through the chosen curve
              </h3>
              <AccessCopyCompare
                key={currentRender.id}
                render={currentRender}
                transfer={newest}
                spec={current.spec}
                curveLabel={curveChoiceName(current)}
              />
            </section>
          ) : null}
        </div>
      </Panel>
    </div>
  );
}
