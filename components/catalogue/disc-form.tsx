"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useEffect, useState } from "react";
import { type FieldPath, type Resolver, useForm, useWatch } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";
import type { AppError } from "@/lib/http/errors";
import { createDiscSchema, nominalSpeeds, updateDiscSchema } from "@/lib/validation/catalogue";
import { type Conflict, ConflictPanel } from "./disc-conflict-panel";
import { discControls } from "./disc-form-controls";
import { type DiscFormValues, emptyValues, toFormValues } from "./disc-form-values";
import { reapplyMine } from "./disc-merge";
import {
  basesAllowed,
  DiscCarrierPanel,
  DiscConditionPanel,
  DiscDatePanel,
  DiscIdentityPanel,
} from "./disc-form-panels";
import { DiscSidesPanel } from "./disc-sides-panel";
import { HandlingCautions } from "./handling-cautions";
import type { AccessionJson, DiscJson } from "./types";

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
          <DiscIdentityPanel
            controls={controls}
            accessions={accessions.data?.accessions ?? []}
            accessionsLoading={accessions.isLoading}
            onAccessionCreated={(a) =>
              void queryClient
                .invalidateQueries({ queryKey: ["accessions"] })
                .then(() => setValue("accessionId", a.id, { shouldValidate: true, shouldDirty: true }))
            }
          />

          <DiscCarrierPanel
            controls={controls}
            format={format}
            speed={speed}
            speedOther={speedOther}
            onSpeedChoice={(choice) => {
              setSpeedOther(choice === "other");
              if (choice !== "other")
                setValue("nominalSpeedRpm", choice, { shouldValidate: true, shouldDirty: true });
            }}
          />

          <DiscDatePanel controls={controls} />

          <DiscSidesPanel
            control={control}
            getValues={form.getValues}
            controls={controls}
            statusById={statusById}
          />
        </div>

        <div className="space-y-6">
          <DiscConditionPanel controls={controls} register={register} />
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
