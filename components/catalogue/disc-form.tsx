"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { type ReactNode, useEffect, useState } from "react";
import { type FieldPath, type Resolver, useFieldArray, useForm } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { controlClass, FieldShell } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { Panel } from "@/components/ui/panel";
import { fetchJson } from "@/lib/http/client";
import { valueText } from "@/lib/value-text";
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
import { discFieldLabels, fieldText, sideChanges } from "./fields";
import { baseLabels, conditionLabels, flagLabels, speedLabel } from "./format";
import { HandlingCautions } from "./handling-cautions";
import { StatusBadge } from "./status-badge";
import type { AccessionJson, DiscJson } from "./types";

interface SideValues {
  /** The side's id in the record ("" for a new side); kept apart from the field array's own keys. */
  sideId: string;
  designation: string;
  matrixNumber: string;
  take: string;
  title: string;
  performers: string;
  notes: string;
}

export interface DiscFormValues {
  accessionId: string;
  shelfMark: string;
  labelName: string;
  catalogueNumber: string;
  format: string;
  base: string;
  diameterIn: string;
  nominalSpeedRpm: string;
  groove: string;
  cut: string;
  recordingDate: string;
  recordedFromYear: string;
  recordedToYear: string;
  conditionGrade: string;
  conditionFlags: string[];
  conditionNotes: string;
  handlingNotes: string;
  sides: SideValues[];
  version: number;
}

type ScalarField = Exclude<keyof DiscFormValues, "sides" | "conditionFlags" | "version">;
const scalarFields = Object.keys(discFieldLabels).filter(
  (k) => k !== "sides" && k !== "conditionFlags",
) as ScalarField[];
const basesAllowed = new Set(["instantaneous_lacquer", "transcription", "other"]);

const blankSide = (designation: string): SideValues => ({
  sideId: "",
  designation,
  matrixNumber: "",
  take: "",
  title: "",
  performers: "",
  notes: "",
});

export function toFormValues(d: DiscJson): DiscFormValues {
  const s = (v: unknown) => (v === null || v === undefined ? "" : valueText(v));
  return {
    accessionId: d.accessionId,
    shelfMark: d.shelfMark,
    labelName: d.labelName,
    catalogueNumber: d.catalogueNumber,
    format: d.format,
    base: s(d.base),
    diameterIn: s(d.diameterIn),
    nominalSpeedRpm: s(d.nominalSpeedRpm),
    groove: d.groove,
    cut: d.cut,
    recordingDate: s(d.recordingDate),
    recordedFromYear: s(d.recordedFromYear),
    recordedToYear: s(d.recordedToYear),
    conditionGrade: d.conditionGrade,
    conditionFlags: [...d.conditionFlags],
    conditionNotes: d.conditionNotes,
    handlingNotes: d.handlingNotes,
    sides: d.sides.map((x) => ({
      sideId: x.id,
      designation: x.designation,
      matrixNumber: x.matrixNumber,
      take: x.take,
      title: x.title,
      performers: x.performers,
      notes: x.notes,
    })),
    version: d.version,
  };
}

const emptyValues: DiscFormValues = {
  accessionId: "",
  shelfMark: "",
  labelName: "",
  catalogueNumber: "",
  format: "shellac_78",
  base: "",
  diameterIn: "10",
  nominalSpeedRpm: "78",
  groove: "coarse",
  cut: "lateral",
  recordingDate: "",
  recordedFromYear: "",
  recordedToYear: "",
  conditionGrade: "unassessed",
  conditionFlags: [],
  conditionNotes: "",
  handlingNotes: "",
  sides: [blankSide("A"), blankSide("B")],
  version: 0,
};

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);
const sideView = (sides: SideValues[]) =>
  sides.map(({ sideId, ...s }) => ({ id: sideId || undefined, ...s }));

/** The fields someone else changed since `loaded`, with their value and the one in this form. */
function conflictRows(loaded: DiscFormValues, theirs: DiscFormValues, yours: DiscFormValues) {
  const fields = (
    ["accessionId", ...scalarFields.filter((f) => f !== "accessionId"), "conditionFlags"] as const
  ).filter((f) => !same(loaded[f], theirs[f]));
  return {
    fields: fields.map((f) => ({
      field: f,
      theirs: theirs[f],
      yours: yours[f],
      youChanged: !same(loaded[f], yours[f]),
    })),
    sides: sideChanges(sideView(loaded.sides), sideView(theirs.sides)),
    sidesYouChanged: !same(loaded.sides, yours.sides),
  };
}

interface Conflict {
  message: string;
  loaded: DiscFormValues;
  current: DiscJson;
  yours: DiscFormValues;
}

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
  const { register, formState, control, watch, setValue, setError } = form;
  const { errors } = formState;
  const sides = useFieldArray({ control, name: "sides" });
  const format = watch("format");
  const speed = watch("nominalSpeedRpm");
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
    const next: DiscFormValues = { ...theirs };
    if (keepMine) {
      const mine = conflict.yours;
      for (const f of [...scalarFields, "conditionFlags"] as const) {
        if (!same(conflict.loaded[f], mine[f])) (next as unknown as Record<string, unknown>)[f] = mine[f];
      }
      if (!same(conflict.loaded.sides, mine.sides)) {
        const live = new Set(theirs.sides.map((s) => s.sideId));
        next.sides = mine.sides.map((s) => (s.sideId && !live.has(s.sideId) ? { ...s, sideId: "" } : s));
      }
    }
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

  const err = (name: FieldPath<DiscFormValues>): string[] | undefined => {
    const parts = name.split(".");
    let node: unknown = errors;
    for (const p of parts) node = (node as Record<string, unknown> | undefined)?.[p];
    const m = (node as { message?: string } | undefined)?.message;
    return m ? [m] : undefined;
  };

  const input = (
    name: FieldPath<DiscFormValues>,
    label: string,
    props: Record<string, unknown> = {},
    hint?: ReactNode,
  ) => {
    const id = `disc-${name.replace(/\./g, "-")}`;
    const e = err(name);
    return (
      <FieldShell id={id} label={label} errors={e} hint={hint}>
        <input
          id={id}
          aria-invalid={e ? true : undefined}
          aria-describedby={e ? `${id}-error` : hint ? `${id}-hint` : undefined}
          className={controlClass(!!e)}
          {...register(name)}
          {...props}
        />
      </FieldShell>
    );
  };
  const select = (
    name: FieldPath<DiscFormValues>,
    label: string,
    options: [string, string][],
    props: Record<string, unknown> = {},
    hint?: ReactNode,
  ) => {
    const id = `disc-${name}`;
    const e = err(name);
    return (
      <FieldShell id={id} label={label} errors={e} hint={hint}>
        <select
          id={id}
          aria-invalid={e ? true : undefined}
          aria-describedby={e ? `${id}-error` : hint ? `${id}-hint` : undefined}
          className={controlClass(!!e)}
          {...register(name)}
          {...props}
        >
          {options.map(([v, l]) => (
            <option key={v} value={v}>
              {l}
            </option>
          ))}
        </select>
      </FieldShell>
    );
  };

  const nextDesignation = () => {
    const used = new Set(form.getValues("sides").map((s) => s.designation.toUpperCase()));
    for (const c of "ABCDEFGH") if (!used.has(c)) return c;
    return "";
  };
  const flags = watch("conditionFlags");
  const grade = watch("conditionGrade");
  const base = watch("base");

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
              {input("recordingDate", "Recording date", { type: "date" }, "When known exactly.")}
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

          <Panel
            title="Sides"
            actions={
              <Button
                type="button"
                size="sm"
                variant="secondary"
                disabled={sides.fields.length >= 8}
                onClick={() => sides.append(blankSide(nextDesignation()))}
                data-testid="add-side"
              >
                Add side
              </Button>
            }
          >
            {err("sides") ? (
              <p role="alert" className="mb-3 text-sm font-medium text-alarm">
                {err("sides")}
              </p>
            ) : null}
            {sides.fields.length === 0 ? (
              <p className="text-sm text-ink-faint">
                No sides yet. Add the sides you can read from the disc.
              </p>
            ) : null}
            <ol className="space-y-4">
              {sides.fields.map((f, i) => {
                const sideId = form.getValues(`sides.${i}.sideId`);
                const status = sideId ? statusById[sideId] : undefined;
                const locked = !!status && status !== "catalogued";
                return (
                  <li
                    key={f.id}
                    className="rounded-lg border border-paper-edge bg-paper/40 p-4"
                    data-testid={`side-row-${i}`}
                  >
                    <div className="mb-3 flex items-center justify-between gap-3">
                      <p className="text-sm font-semibold">
                        Side {i + 1}{" "}
                        {status ? (
                          <StatusBadge status={status} />
                        ) : (
                          <span className="text-xs font-normal text-ink-faint">new</span>
                        )}
                      </p>
                      <Button
                        type="button"
                        size="sm"
                        variant="quiet"
                        disabled={locked}
                        title={locked ? "A side already in the workflow cannot be removed." : undefined}
                        onClick={() => sides.remove(i)}
                        aria-label={`Remove side ${i + 1}`}
                      >
                        Remove
                      </Button>
                    </div>
                    <div className="grid gap-3 md:grid-cols-[6rem_1fr_6rem]">
                      {input(`sides.${i}.designation`, "Side", {
                        className: controlClass(!!err(`sides.${i}.designation`), "font-mono"),
                        "data-testid": `side-${i}-designation`,
                      })}
                      {input(`sides.${i}.matrixNumber`, "Matrix number", {
                        className: controlClass(!!err(`sides.${i}.matrixNumber`), "font-mono"),
                        "data-testid": `side-${i}-matrix`,
                      })}
                      {input(`sides.${i}.take`, "Take", { "data-testid": `side-${i}-take` })}
                    </div>
                    <div className="mt-3 grid gap-3 md:grid-cols-2">
                      {input(`sides.${i}.title`, "Title", { "data-testid": `side-${i}-title` })}
                      {input(`sides.${i}.performers`, "Performers", {
                        "data-testid": `side-${i}-performers`,
                      })}
                    </div>
                    <div className="mt-3">{input(`sides.${i}.notes`, "Notes")}</div>
                  </li>
                );
              })}
            </ol>
          </Panel>
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

function ConflictPanel({
  conflict,
  accessionName,
  onReload,
}: {
  conflict: Conflict;
  accessionName: (id: string) => string | undefined;
  onReload: (keepMine: boolean) => void;
}) {
  const theirs = toFormValues(conflict.current);
  const rows = conflictRows(conflict.loaded, theirs, conflict.yours);
  const show = (f: string, v: unknown) =>
    fieldText(f, f === "accessionId" ? v : v === "" ? null : v, accessionName);
  return (
    <div
      role="alert"
      className="space-y-4 rounded-xl border border-alarm/40 bg-alarm-wash/60 p-5"
      data-testid="disc-conflict"
    >
      <div>
        <p className="font-semibold">Someone else saved this disc while you were editing it.</p>
        <p className="text-sm text-ink-soft">{conflict.message}</p>
      </div>
      {rows.fields.length || rows.sides.length ? (
        <div className="overflow-x-auto rounded-lg border border-paper-edge bg-white">
          <table className="w-full text-left text-sm" aria-label="What changed" data-testid="conflict-fields">
            <thead className="bg-paper-deep/60 text-xs uppercase tracking-wide text-ink-soft">
              <tr>
                <th scope="col" className="px-3 py-2">
                  Field
                </th>
                <th scope="col" className="px-3 py-2">
                  Theirs (saved, version {conflict.current.version})
                </th>
                <th scope="col" className="px-3 py-2">
                  Yours (not saved)
                </th>
              </tr>
            </thead>
            <tbody>
              {rows.fields.map((r) => (
                <tr key={r.field} className="border-t border-paper-edge/70">
                  <th scope="row" className="px-3 py-2 font-medium">
                    {discFieldLabels[r.field]}
                  </th>
                  <td className="px-3 py-2">{show(r.field, r.theirs)}</td>
                  <td className="px-3 py-2">
                    {show(r.field, r.yours)}
                    {r.youChanged ? (
                      <span className="ml-2 rounded bg-shellac-wash px-1.5 text-xs text-shellac-deep">
                        you changed this too
                      </span>
                    ) : null}
                  </td>
                </tr>
              ))}
              {rows.sides.length ? (
                <tr className="border-t border-paper-edge/70 align-top">
                  <th scope="row" className="px-3 py-2 font-medium">
                    Sides
                  </th>
                  <td className="px-3 py-2">
                    <ul className="list-disc pl-4 text-xs">
                      {rows.sides.map((s) => (
                        <li key={s}>{s}</li>
                      ))}
                    </ul>
                  </td>
                  <td className="px-3 py-2 text-xs">
                    {rows.sidesYouChanged ? "You changed the sides too." : "You did not change the sides."}
                  </td>
                </tr>
              ) : null}
            </tbody>
          </table>
        </div>
      ) : (
        <p className="text-sm">
          Their save changed no field you can edit here (for example, a side moved along the workflow).
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        <Button type="button" onClick={() => onReload(true)} data-testid="conflict-reapply">
          Load their version and reapply my changes
        </Button>
        <Button
          type="button"
          variant="secondary"
          onClick={() => onReload(false)}
          data-testid="conflict-reload"
        >
          Load their version, drop mine
        </Button>
      </div>
    </div>
  );
}
