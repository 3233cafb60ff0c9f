"use client";
/** Records a finding against an item: a fault (it lists the transfers since the last good check) or an inspection that found it sound. */
import Link from "next/link";
import { useId, useState } from "react";
import { isoDateInputProps } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useSave } from "./use-save";

interface Answer {
  window: { from: string | null; to: string } | null;
  transfers: unknown[];
}

export function FindingForm({ itemId }: { itemId: string }) {
  const uid = useId();
  const [foundOn, setFoundOn] = useState(() => new Date().toISOString().slice(0, 10));
  const [outcome, setOutcome] = useState<"fault" | "good">("fault");
  const [description, setDescription] = useState("");
  const [saved, setSaved] = useState<Answer | null>(null);
  const { save, saving, error, field } = useSave<Answer>();
  const submit = async () => {
    const answer = await save(`/api/equipment/items/${itemId}/findings`, "POST", {
      foundOn,
      outcome,
      description,
    });
    if (answer) {
      setSaved(answer);
      setDescription("");
    }
  };
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        void submit();
      }}
      data-testid="finding-form"
    >
      <fieldset>
        <legend className="mb-1.5 text-sm font-medium">What was found</legend>
        <div className="flex flex-wrap gap-4 text-sm">
          {(
            [
              ["fault", "A fault (the transfers since the last good check are in doubt)"],
              ["good", "Inspected and sound (a good check)"],
            ] as const
          ).map(([v, words]) => (
            <label key={v} className="inline-flex items-center gap-2">
              <input
                type="radio"
                name={`${uid}-outcome`}
                checked={outcome === v}
                onChange={() => setOutcome(v)}
                className="accent-[#2f6f6a]"
                data-testid={`finding-${v}`}
              />
              {words}
            </label>
          ))}
        </div>
      </fieldset>
      <div className="grid gap-3 sm:grid-cols-[10rem_minmax(0,1fr)]">
        <TextField
          id={`${uid}-on`}
          label="Found on"
          {...isoDateInputProps}
          value={foundOn}
          onChange={(e) => setFoundOn(e.target.value)}
          errors={field("foundOn")}
          data-testid="finding-date"
        />
        <TextField
          id={`${uid}-what`}
          label="Description"
          placeholder="e.g. tip chipped, seen under the microscope"
          value={description}
          onChange={(e) => setDescription(e.target.value)}
          errors={field("description")}
          data-testid="finding-description"
        />
      </div>
      {error ? (
        <Notice tone="error" title="Not recorded">
          {error}
        </Notice>
      ) : null}
      {saved?.window ? (
        <Notice tone="caution" title="Finding recorded" testId="finding-window">
          {saved.transfers.length} transfer{saved.transfers.length === 1 ? "" : "s"} made with it{" "}
          {saved.window.from ? `from ${saved.window.from}` : "since it was first used"} to {saved.window.to}.{" "}
          <Link
            className="font-medium text-shellac-deep underline"
            href={`/equipment/items/${itemId}/transfers?${new URLSearchParams({
              ...(saved.window.from ? { from: saved.window.from } : {}),
              to: saved.window.to,
            }).toString()}`}
          >
            List them for re-transfer
          </Link>
        </Notice>
      ) : saved ? (
        <Notice tone="success" title="Good check recorded" />
      ) : null}
      <Button type="submit" disabled={saving} data-testid="finding-save">
        Record the finding
      </Button>
    </form>
  );
}
