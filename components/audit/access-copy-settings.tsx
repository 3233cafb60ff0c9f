"use client";
import { useQueryClient } from "@tanstack/react-query";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { SelectField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useLabSettings } from "@/hooks/use-lab-settings";
import { fetchJson } from "@/lib/http/client";
import { accessCopyRates } from "@/lib/validation/transfers";

function rateWords(rate: "transfer" | number): string {
  return rate === "transfer" ? "the transfer's own rate" : `${rate / 1000} kHz`;
}

/** The lab's defaults for access copies: rate and word length (engineers may change them per render). */
export function AccessCopySettings({ canEdit }: { canEdit: boolean }) {
  const uid = useId();
  const queryClient = useQueryClient();
  const settings = useLabSettings();
  const [rate, setRate] = useState<"transfer" | number | null>(null);
  const [bits, setBits] = useState<16 | 24 | null>(null);
  const [state, setState] = useState<{ ok: boolean; text: string } | null>(null);
  const current = settings.data;
  if (!current) return <p className="text-sm text-ink-faint">Loading…</p>;
  if (!canEdit) {
    return (
      <p className="text-sm" data-testid="access-copy-settings">
        Access copies are written at <strong>{rateWords(current.accessCopyRateHz)}</strong>,{" "}
        <strong>{current.accessCopyBitDepth}-bit</strong>, unless the engineer chooses otherwise for a render.
        An admin sets these defaults.
      </p>
    );
  }
  const r = rate ?? current.accessCopyRateHz;
  const b = bits ?? current.accessCopyBitDepth;
  const save = async () => {
    try {
      await fetchJson("/api/settings", {
        method: "PATCH",
        body: JSON.stringify({ accessCopyRateHz: r, accessCopyBitDepth: b }),
      });
      await queryClient.invalidateQueries({ queryKey: ["settings"] });
      setState({ ok: true, text: `Access copies now default to ${rateWords(r)}, ${b}-bit.` });
    } catch (err) {
      setState({ ok: false, text: err instanceof Error ? err.message : String(err) });
    }
  };
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        void save();
      }}
      data-testid="access-copy-settings"
    >
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField
          id={`${uid}-rate`}
          label="Access copy sample rate"
          value={String(r)}
          onChange={(e) => setRate(e.target.value === "transfer" ? "transfer" : Number(e.target.value))}
        >
          <option value="transfer">As the transfer</option>
          {accessCopyRates.map((x) => (
            <option key={x} value={x}>
              {x / 1000} kHz
            </option>
          ))}
        </SelectField>
        <SelectField
          id={`${uid}-bits`}
          label="Word length"
          value={String(b)}
          onChange={(e) => setBits(Number(e.target.value) as 16 | 24)}
        >
          <option value="24">24-bit</option>
          <option value="16">16-bit</option>
        </SelectField>
      </div>
      <p className="text-xs text-ink-faint">
        Another rate than the transfer&apos;s is reached by resampling after the equalization (libsamplerate,
        best quality); the flat transfer is never changed.
      </p>
      <Button type="submit" size="sm">
        Save the defaults
      </Button>
      {state ? <Notice tone={state.ok ? "success" : "error"}>{state.text}</Notice> : null}
    </form>
  );
}
