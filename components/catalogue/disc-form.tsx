"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useEffect, useState } from "react";
import { type FieldPath, type Resolver, useForm, useWatch } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { controlClass, FieldShell } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { fetchJson } from "@/lib/http/client";
import type { AppError } from "@/lib/http/errors";
import {
  conditionFlags,
  conditionGrades,
  createDiscSchema,
  discBases,
  discFormats,
  formatLabels,
  nominalSpeeds,
  updateDiscSchema,
} from "@/lib/validation/catalogue";
import { AccessionForm } from "./accession-form";
import { type Conflict, ConflictPanel } from "./disc-conflict-panel";
import { discControls } from "./disc-form-controls";
import { type DiscFormValues, emptyValues, toFormValues } from "./disc-form-values";
import { reapplyMine } from "./disc-merge";
import { DiscSidesPanel } from "./disc-sides-panel";
import { baseLabels, conditionLabels, flagLabels, isoDateInputProps, speedLabel } from "./format";
import { HandlingCautions } from "./handling-cautions";
import type { AccessionJson, DiscJson } from "./types";

const basesAllowed = new Set(["instantaneous_lacquer", "transcription", "other"]);

export function DiscForm({
  initial,
  accessionId,
}: {
  initial?: DiscJson;
  /** Preselected accession for a new disc. */ accessionId?: string;
}) {
  const editing = !!initial;
  const router = useRouter();
  const queryClient = useQueryClient();
  const [loaded, setLoaded] = useState<DiscFormValues>(() =>
    initial ? toFormValues(initial) : { ...emptyValues, accessionId: accessionId ?? "" },
  );
  const [statusById, setStatusById] = useState<Record<string, string>>(() =>
    Object.fromEntries((initial?.sides ?? []).map((s) => [s.id, s.status])),
  );
  const [conflict, setConflict] = useState<Conflict | null>(null);
  const [notice, setNotice] = useState<{ tone: "error" | "info"; text: string } | null>(null);
  const [newAccession, setNewAccession] = useState(false);

  const form = useForm<DiscFormValues>({
    resolver: zodResolver(
      editing ? updateDiscSchema : createDiscSchema,
    ) as unknown as Resolver<DiscFormValues>,
    defaultValues: loaded,
    mode: "onTouched",
  });
  const { register, formState, control, setValue, setError } = form;
  const { errors } = formState;
  const format = useWatch({ control, name: "format" });
  const speed = useWatch({ control, name: "nominalSpeedRpm" });
  const [speedOther, setSpeedOther] = useState(
    () => !nominalSpeeds.map(String).includes(loaded.nominalSpeedRpm),
  );

  useEffect(() => {
    if (!basesAllowed.has(format) && form.getValues("base")) setValue("base", "");
  }, [format, form, setValue]);

  const accessions = useQuery({
    queryKey: ["accessions"],
    queryFn: () => fetchJson<{ accessions: AccessionJson[] }>("/api/accessions"),
    staleTime: 30_000,
  });
  const accessionName = (id: string) => accessions.data?.accessions.find((a) => a.id === id)?.identifier;
  // The select had only its placeholder when it mounted: once the options arrive, show the chosen one.
  useEffect(() => {
    if (accessions.data) setValue("accessionId", form.getValues("accessionId"));
  }, [accessions.data, form, setValue]);

  const save = useMutation<{ disc: DiscJson }, AppError, { body: unknown; yours: DiscFormValues }>({
    mutationFn: ({ body }) =>
      fetchJson(editing ? `/api/discs/${initial.id}` : "/api/discs", {
        method: editing ? "PATCH" : "POST",
        body: JSON.stringify(body),
      }),
    onMutate: () => {
      setNotice(null);
      setConflict(null);
    },
    onSuccess: ({ disc }) => {
      void queryClient.invalidateQueries({ queryKey: ["discs"] });
      void queryClient.invalidateQueries({ queryKey: ["disc", disc.id] });
      void queryClient.invalidateQueries({ queryKey: ["disc-events", disc.id] });
      router.push(`/catalogue/${disc.id}`);
      router.refresh();
    },
    onError: (e, { yours }) => {
      const current = (e.details as { current?: DiscJson } | undefined)?.current;
      if (e.status === 409 && current && editing) {
        setConflict({ message: e.message, loaded, current, yours });
        return;
      }
      let placed = false;
      for (const [path, msgs] of Object.entries(e.fields ?? {})) {
        if (path === "_") continue;
        setError(
          path as FieldPath<DiscFormValues>,
          { type: "server", message: msgs.join(" ") },
          { shouldFocus: !placed },
        );
        placed = true;
      }
      setNotice({ tone: "error", text: placed ? `${e.message} See the marked fields.` : e.message });
    },
  });

  const onSubmit = form.handleSubmit((parsed) => {
    const raw = form.getValues();
    const out = parsed as unknown as Record<string, unknown> & { sides: Record<string, unknown>[] };
    // The schema drops the field array's bookkeeping; put each side's record id back.
    out.sides = out.sides.map((s, i) => ({
      ...s,
      ...(raw.sides[i]?.sideId ? { id: raw.sides[i].sideId } : {}),
    }));
    if (editing) out.version = loaded.version;
    save.mutate({ body: out, yours: raw });
  });

  /** Starts again from the record as it now stands; with keepMine, lays this person's own edits over it. */
  function reload(keepMine: boolean) {
    if (!conflict) return;
    const theirs = toFormValues(conflict.current);
    const next = keepMine ? reapplyMine(conflict.loaded, theirs, conflict.yours) : theirs;
    setLoaded(theirs);
    setStatusById(Object.fromEntries(conflict.current.sides.map((s) => [s.id, s.status])));
    setSpeedOther(!nominalSpeeds.map(String).includes(next.nominalSpeedRpm));
    form.reset(next, { keepDefaultValues: false });
    setConflict(null);
    setNotice({
      tone: "info",
      text: keepMine
        ? `Loaded version ${theirs.version} with your changes laid over it. Check the fields, then save again.`
        : `Loaded version ${theirs.version}. Your unsaved changes were set aside.`,
    });
    window.scrollTo({ top: 0, behavior: "smooth" });
  }

  const controls = discControls(register, errors);
  const { err, input, select } = controls;

  const flags = useWatch({ control, name: "conditionFlags" });
  const grade = useWatch({ control, name: "conditionGrade" });
  const base = useWatch({ control, name: "base" });

  return (
    <form
      onSubmit={(e) => void onSubmit(e)}
      noValidate
      className="space-y-6"
      data-testid="disc-form"
      aria-label={editing ? "Edit disc" : "New disc"}
    >
      {conflict ? (
        <ConflictPanel conflict={conflict} accessionName={accessionName} onReload={reload} />
      ) : null}
      {notice ? (
        <Notice tone={notice.tone} testId="disc-form-notice">
          {notice.text}
        </Notice>
      ) : null}

      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_24rem]">
        <div className="space-y-6">
          <Panel title="Identity">
            <div className="grid gap-4 md:grid-cols-2">
              <div className="space-y-2 md:col-span-2">
                <div className="flex flex-wrap items-end gap-3">
                  <div className="min-w-64 flex-1">
                    {select(
                      "accessionId",
                      "Accession",
                      [
                        ["", accessions.isLoading ? "Loading…" : "Choose the accession"],
                        ...(accessions.data?.accessions ?? []).map((a): [string, string] => [
                          a.id,
                          `${a.identifier} — ${a.source}`,
                        ]),
                      ],
                      {},
                      "The batch this disc arrived in.",
                    )}
                  </div>
                  <Button
                    type="button"
                    variant="secondary"
                    size="sm"
                    className="mb-6"
                    aria-expanded={newAccession}
                    onClick={() => setNewAccession((v) => !v)}
                    data-testid="toggle-new-accession"
                  >
                    {newAccession ? "Close" : "New accession…"}
                  </Button>
                </div>
                {newAccession ? (
                  <div className="rounded-lg border border-dashed border-paper-edge bg-paper/50 p-4">
                    <AccessionForm
                      testId="inline-accession"
                      onCancel={() => setNewAccession(false)}
                      onCreated={(a) => {
                        void queryClient
                          .invalidateQueries({ queryKey: ["accessions"] })
                          .then(() =>
                            setValue("accessionId", a.id, { shouldValidate: true, shouldDirty: true }),
                          );
                        setNewAccession(false);
                      }}
                    />
                  </div>
                ) : null}
              </div>
              {input("shelfMark", "Shelf mark", {
                autoComplete: "off",
                className: controlClass(!!err("shelfMark"), "font-mono"),
              })}
              {input("labelName", "Label")}
              {input("catalogueNumber", "Catalogue number", {
                className: controlClass(!!err("catalogueNumber"), "font-mono"),
              })}
            </div>
          </Panel>

          <Panel title="Carrier">
            <div className="grid gap-4 md:grid-cols-3">
              {select(
                "format",
                "Format",
                discFormats.map((f) => [f, formatLabels[f]]),
              )}
              {basesAllowed.has(format) ? (
                select(
                  "base",
                  "Base",
                  [["", "Not recorded"], ...discBases.map((b): [string, string] => [b, baseLabels[b]])],
                  {},
                  "Lacquer and transcription discs only.",
                )
              ) : (
                <FieldShell
                  id="disc-base-na"
                  label="Base"
                  hint="Recorded for lacquer and transcription discs only."
                >
                  <input
                    id="disc-base-na"
                    disabled
                    value="—"
                    className={controlClass(false, "opacity-60")}
                    readOnly
                  />
                </FieldShell>
              )}
              {input("diameterIn", "Diameter (inches)", { inputMode: "decimal" })}
              <div className="space-y-1.5">
                <label htmlFor="disc-speed-choice" className="block text-sm font-medium">
                  Nominal speed (rpm)
                </label>
                <select
                  id="disc-speed-choice"
                  value={speedOther ? "other" : speed}
                  onChange={(e) => {
                    if (e.target.value === "other") {
                      setSpeedOther(true);
                    } else {
                      setSpeedOther(false);
                      setValue("nominalSpeedRpm", e.target.value, {
                        shouldValidate: true,
                        shouldDirty: true,
                      });
                    }
                  }}
                  className={controlClass(!!err("nominalSpeedRpm"))}
                >
                  {nominalSpeeds.map((s) => (
                    <option key={s} value={String(s)}>
                      {speedLabel(s)}
                    </option>
                  ))}
                  <option value="other">Other…</option>
                </select>
                {!speedOther && err("nominalSpeedRpm") ? (
                  <p className="text-xs font-medium text-alarm">{err("nominalSpeedRpm")}</p>
                ) : null}
              </div>
              {speedOther ? input("nominalSpeedRpm", "Other speed (rpm)", { inputMode: "decimal" }) : null}
              {select("groove", "Groove", [
                ["coarse", "Coarse groove"],
                ["micro", "Microgroove"],
              ])}
              {select("cut", "Cut", [
                ["lateral", "Lateral"],
                ["vertical", "Vertical (hill-and-dale)"],
              ])}
            </div>
          </Panel>

          <Panel title="Date">
            <div className="grid gap-4 md:grid-cols-3">
              {input(
                "recordingDate",
                "Recording date (YYYY-MM-DD)",
                isoDateInputProps,
                "When known exactly.",
              )}
              {input("recordedFromYear", "Recorded from (year)", {
                inputMode: "numeric",
                placeholder: "e.g. 1931",
              })}
              {input("recordedToYear", "Recorded to (year)", {
                inputMode: "numeric",
                placeholder: "e.g. 1933",
              })}
            </div>
          </Panel>

          <DiscSidesPanel
            control={control}
            getValues={form.getValues}
            controls={controls}
            statusById={statusById}
          />
        </div>

        <div className="space-y-6">
          <Panel title="Condition">
            <div className="space-y-4">
              {select(
                "conditionGrade",
                "Condition",
                conditionGrades.map((g) => [g, conditionLabels[g]]),
              )}
              <fieldset>
                <legend className="mb-1.5 text-sm font-medium">Condition flags</legend>
                <div className="grid grid-cols-2 gap-1.5">
                  {conditionFlags.map((f) => (
                    <label key={f} className="flex items-center gap-2 text-sm">
                      <input
                        type="checkbox"
                        value={f}
                        {...register("conditionFlags")}
                        className="h-4 w-4 accent-shellac"
                      />
                      {flagLabels[f]}
                    </label>
                  ))}
                </div>
              </fieldset>
              <FieldShell id="disc-conditionNotes" label="Condition notes" errors={err("conditionNotes")}>
                <textarea
                  id="disc-conditionNotes"
                  rows={3}
                  className={controlClass(!!err("conditionNotes"))}
                  {...register("conditionNotes")}
                />
              </FieldShell>
              <FieldShell
                id="disc-handlingNotes"
                label="Handling notes"
                errors={err("handlingNotes")}
                hint="Anything the next person to handle it should know."
              >
                <textarea
                  id="disc-handlingNotes"
                  rows={3}
                  aria-describedby="disc-handlingNotes-hint"
                  className={controlClass(!!err("handlingNotes"))}
                  {...register("handlingNotes")}
                />
              </FieldShell>
            </div>
          </Panel>
          <HandlingCautions
            format={format}
            base={base || null}
            conditionFlags={flags ?? []}
            conditionGrade={grade}
          />
        </div>
      </div>

      <div className="flex flex-wrap items-center gap-3 border-t border-paper-edge pt-4">
        <Button type="submit" disabled={save.isPending} data-testid="save-disc">
          {save.isPending ? "Saving…" : editing ? "Save changes" : "Catalogue this disc"}
        </Button>
        <Link
          href={editing ? `/catalogue/${initial.id}` : "/catalogue"}
          className="rounded px-3 py-2 text-sm text-ink-soft hover:text-ink"
        >
          Cancel
        </Link>
        {editing ? (
          <span className="ml-auto font-mono text-xs text-ink-faint">
            editing from version {loaded.version}
          </span>
        ) : null}
      </div>
    </form>
  );
}
