"use client";
/**
 * "Add a preset to compare": a choice of the lab's presets and a button that hands the
 * chosen one to `onAdd`. The workbench's comparison and the bench's candidates both use
 * it; each puts it in a row of its own controls.
 */
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { usePresets } from "@/hooks/use-presets";
import type { PresetJson } from "./types";

export function PresetPicker({
  label,
  addLabel,
  exclude = [],
  full,
  onAdd,
}: {
  label: string;
  addLabel: string;
  /** Presets already compared, left out of the choice. */
  exclude?: readonly string[];
  /** No room for another curve: the button waits. */
  full: boolean;
  onAdd: (preset: PresetJson) => void;
}) {
  const uid = useId();
  const presets = usePresets();
  const [picked, setPicked] = useState("");
  const offered = presets.data?.presets.filter((p) => !exclude.includes(p.id)) ?? [];
  return (
    <>
      <div className="min-w-56 flex-1 space-y-1">
        <label htmlFor={`${uid}-preset`} className="block text-xs font-medium text-ink-soft">
          {label}
        </label>
        <select
          id={`${uid}-preset`}
          value={picked}
          onChange={(e) => setPicked(e.target.value)}
          className="h-9 w-full rounded-md border border-paper-edge bg-white px-2 text-sm"
          data-testid="preset-pick"
        >
          <option value="">
            {presets.isLoading ? "Loading…" : offered.length ? "Choose a preset…" : "No presets to add"}
          </option>
          {offered.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name}
            </option>
          ))}
        </select>
      </div>
      <Button
        type="button"
        variant="secondary"
        size="sm"
        disabled={!picked || full}
        onClick={() => {
          const p = offered.find((x) => x.id === picked);
          if (p) onAdd(p);
          setPicked("");
        }}
        data-testid="preset-pick-add"
      >
        {addLabel}
      </Button>
    </>
  );
}
