"use client";
import type { Control, UseFormGetValues } from "react-hook-form";
import { useFieldArray } from "react-hook-form";
import { Button } from "@/components/ui/button";
import { controlClass } from "@/components/ui/field";
import { Panel } from "@/components/ui/panel";
import type { DiscControls } from "./disc-form-controls";
import { blankSide, type DiscFormValues } from "./disc-form-values";
import { StatusBadge } from "./status-badge";

/** The disc's sides: one card each; a side already in the workflow cannot be removed. */
export function DiscSidesPanel({
  control,
  getValues,
  controls: { err, input },
  statusById,
}: {
  control: Control<DiscFormValues>;
  getValues: UseFormGetValues<DiscFormValues>;
  controls: DiscControls;
  statusById: Record<string, string>;
}) {
  const sides = useFieldArray({ control, name: "sides" });
  const nextDesignation = () => {
    const used = new Set(getValues("sides").map((s) => s.designation.toUpperCase()));
    for (const c of "ABCDEFGH") if (!used.has(c)) return c;
    return "";
  };
  return (
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
        <p className="text-sm text-ink-faint">No sides yet. Add the sides you can read from the disc.</p>
      ) : null}
      <ol className="space-y-4">
        {sides.fields.map((f, i) => {
          const sideId = getValues(`sides.${i}.sideId`);
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
  );
}
