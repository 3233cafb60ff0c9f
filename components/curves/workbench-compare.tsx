"use client";
/** The workbench's comparison: up to three curves plotted beside the one being edited. */
import { useState } from "react";
import { Button } from "@/components/ui/button";
import type { CurveSpec } from "@/lib/curves";
import { CURVE_COLORS } from "./plot-format";
import { PresetPicker } from "./preset-picker";

export const MAX_COMPARE = 3;

export interface CompareSlot {
  key: string;
  label: string;
  spec: CurveSpec;
}

/** The compared curves, with `add` refusing a fourth and `remove` by slot key. */
export function useCompareSlots() {
  const [slots, setSlots] = useState<CompareSlot[]>([]);
  const add = (slot: Omit<CompareSlot, "key">) =>
    setSlots((cur) =>
      cur.length >= MAX_COMPARE
        ? cur
        : [...cur, { ...slot, key: `${Date.now()}-${Math.random().toString(36).slice(2, 6)}` }],
    );
  const remove = (key: string) => setSlots((cur) => cur.filter((x) => x.key !== key));
  return { slots, add, remove, full: slots.length >= MAX_COMPARE };
}

export function ComparePanel({
  editingLabel,
  compare,
  spec,
  canPin,
  onEdit,
}: {
  editingLabel: string;
  compare: ReturnType<typeof useCompareSlots>;
  /** The curve as it is now, for "Pin this curve". */
  spec: CurveSpec;
  canPin: boolean;
  onEdit: (spec: CurveSpec) => void;
}) {
  return (
    <div className="space-y-3" data-testid="compare">
      <ul className="space-y-2">
        <li className="flex items-center gap-3 text-sm">
          <Swatch color={CURVE_COLORS[0]} />
          <span className="font-semibold">{editingLabel}</span>
          <span className="text-ink-faint">always shown</span>
        </li>
        {compare.slots.map((c, i) => (
          <li key={c.key} className="flex flex-wrap items-center gap-3 text-sm" data-testid="compare-slot">
            <Swatch color={CURVE_COLORS[i + 1]} />
            <span className="min-w-0 flex-1 truncate">{c.label}</span>
            <Button type="button" variant="quiet" size="sm" onClick={() => onEdit(c.spec)}>
              Edit this one
            </Button>
            <Button
              type="button"
              variant="quiet"
              size="sm"
              aria-label={`Remove ${c.label} from the comparison`}
              onClick={() => compare.remove(c.key)}
            >
              Remove
            </Button>
          </li>
        ))}
      </ul>
      <div className="flex flex-wrap items-end gap-2 border-t border-paper-edge pt-3">
        <PresetPicker
          label="A preset from the library"
          addLabel="Add to comparison"
          full={compare.full}
          onAdd={(p) => compare.add({ label: `${p.name} v${p.version}`, spec: p.spec })}
        />
        <Button
          type="button"
          variant="secondary"
          size="sm"
          disabled={!canPin || compare.full}
          onClick={() =>
            compare.add({
              label: `Snapshot ${new Date().toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit", second: "2-digit" })}`,
              spec,
            })
          }
          data-testid="compare-pin"
        >
          Pin this curve as it is now
        </Button>
      </div>
      <p className="text-xs text-ink-faint">
        Up to {MAX_COMPARE} curves beside the one you are editing. The straight-line approximation is drawn
        for the edited curve only.
      </p>
    </div>
  );
}

function Swatch({ color }: { color: string }) {
  return <span aria-hidden className="inline-block h-1 w-5 shrink-0 rounded" style={{ background: color }} />;
}
