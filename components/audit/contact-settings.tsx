"use client";
import { useQueryClient } from "@tanstack/react-query";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { type LabSettingsJson, useLabSettings } from "@/hooks/use-lab-settings";
import { fetchJson } from "@/lib/http/client";
import { AppError } from "@/lib/http/errors";

type Contact = Pick<LabSettingsJson, "contactName" | "contactEmail" | "contactPhone" | "contactAddress">;

const fields: { key: keyof Contact; label: string; bagInfo: string }[] = [
  { key: "contactName", label: "Contact person", bagInfo: "Contact-Name" },
  { key: "contactEmail", label: "Contact e-mail", bagInfo: "Contact-Email" },
  { key: "contactPhone", label: "Contact telephone", bagInfo: "Contact-Phone" },
  { key: "contactAddress", label: "Postal address", bagInfo: "Organization-Address" },
];

/** The lab's contact for repositories, written into every bag's bag-info.txt; an admin keeps it. */
export function ContactSettings({ canEdit }: { canEdit: boolean }) {
  const uid = useId();
  const queryClient = useQueryClient();
  const settings = useLabSettings();
  const [draft, setDraft] = useState<Partial<Contact>>({});
  const [state, setState] = useState<{ ok: boolean; text: string; fields?: Record<string, string[]> } | null>(
    null,
  );
  const current = settings.data;
  if (!current) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!canEdit) {
    const given = fields.filter((f) => current[f.key]);
    return (
      <dl
        className="grid grid-cols-[9rem_minmax(0,1fr)] gap-x-4 gap-y-1 text-sm"
        data-testid="contact-settings"
      >
        {given.length ? (
          given.map((f) => (
            <div key={f.key} className="contents">
              <dt className="text-ink-soft">{f.label}</dt>
              <dd className="whitespace-pre-line">{current[f.key]}</dd>
            </div>
          ))
        ) : (
          <p className="col-span-2 text-ink-soft">No contact set yet: an admin sets it.</p>
        )}
      </dl>
    );
  }
  const value = (k: keyof Contact) => draft[k] ?? current[k];
  const save = async () => {
    try {
      await fetchJson("/api/settings", {
        method: "PATCH",
        body: JSON.stringify(Object.fromEntries(fields.map((f) => [f.key, value(f.key)]))),
      });
      await queryClient.invalidateQueries({ queryKey: ["settings"] });
      setDraft({});
      setState({ ok: true, text: "Saved: the next bag carries this contact." });
    } catch (err) {
      setState({
        ok: false,
        text: err instanceof Error ? err.message : String(err),
        fields: err instanceof AppError ? err.fields : undefined,
      });
    }
  };
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        void save();
      }}
      data-testid="contact-settings"
    >
      <div className="grid gap-3 sm:grid-cols-2">
        {fields.map((f) =>
          f.key === "contactAddress" ? (
            <div key={f.key} className="space-y-1 sm:col-span-2">
              <label htmlFor={`${uid}-${f.key}`} className="block text-sm font-medium">
                {f.label}
              </label>
              <textarea
                id={`${uid}-${f.key}`}
                rows={3}
                className="w-full rounded-md border border-paper-edge bg-white px-3 py-2 text-sm"
                value={value(f.key)}
                onChange={(e) => setDraft({ ...draft, [f.key]: e.target.value })}
              />
              {state?.fields?.[f.key] ? (
                <p className="text-xs text-alarm">{state.fields[f.key].join(" ")}</p>
              ) : null}
            </div>
          ) : (
            <TextField
              key={f.key}
              id={`${uid}-${f.key}`}
              label={f.label}
              value={value(f.key)}
              errors={state?.fields?.[f.key]}
              onChange={(e) => setDraft({ ...draft, [f.key]: e.target.value })}
            />
          ),
        )}
      </div>
      <p className="text-xs text-ink-faint">
        Written into bag-info.txt of every BagIt package as {fields.map((f) => f.bagInfo).join(", ")}, beside
        Source-Organization (the lab&apos;s name).
      </p>
      <Button type="submit" size="sm">
        Save the contact
      </Button>
      {state ? <Notice tone={state.ok ? "success" : "error"}>{state.text}</Notice> : null}
    </form>
  );
}
