"use client";
import { Button } from "@/components/ui/button";
import type { DiscFormValues } from "./disc-form-values";
import { toFormValues } from "./disc-form-values";
import { conflictRows } from "./disc-merge";
import { discFieldLabels, fieldText } from "./fields";
import type { DiscJson } from "./types";

export interface Conflict {
  message: string;
  loaded: DiscFormValues;
  current: DiscJson;
  yours: DiscFormValues;
}

/** Someone else saved the disc meanwhile: what they changed beside this person's edits, and the ways on. */
export function ConflictPanel({
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
