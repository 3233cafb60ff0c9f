"use client";
import { useMutation } from "@tanstack/react-query";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { can } from "@/lib/auth/permissions";
import type { Role } from "@/lib/auth/roles";
import type { Action } from "@/lib/auth/permissions";
import { fetchJson } from "@/lib/http/client";
import type { AppError } from "@/lib/http/errors";
import type { SideJson } from "./types";

/** One step of the side workflow, as the server's table states it (passed down from the page). */
export interface Step {
  from: string;
  to: string;
  action: Action;
  /** How the step happens; only "submit" and "review" are buttons here, the rest follow from work on the bench. */
  via: string;
  assignedOnly?: boolean;
  reasonRequired?: boolean;
}

const stepLabels: Record<string, string> = {
  in_review: "Send for review",
  approved: "Approve",
  returned: "Return…",
};

/**
 * The steps the signed-in person may take here from a side's status: sending a rendered
 * side for review, and the curator's approve or return. Assigning goes through the
 * assignment control; choosing the curve, uploading and rendering happen on the bench.
 * The server checks every step again.
 */
export function stepsFor(side: SideJson, steps: readonly Step[], user: { id: string; role: Role }): Step[] {
  return steps.filter(
    (t) =>
      t.from === side.status &&
      (t.via === "submit" || t.via === "review") &&
      can(user.role, t.action) &&
      (!t.assignedOnly || side.assignedEngineerId === user.id),
  );
}

export function SideSteps({
  side,
  steps,
  user,
  onMoved,
}: {
  side: SideJson;
  steps: readonly Step[];
  user: { id: string; role: Role };
  onMoved: () => void;
}) {
  const id = useId();
  const [asking, setAsking] = useState<Step | null>(null);
  const [reason, setReason] = useState("");
  const move = useMutation<unknown, AppError, { to: string; reason?: string }>({
    mutationFn: (v: { to: string; reason?: string }) =>
      fetchJson(`/api/sides/${side.id}/transition`, { method: "POST", body: JSON.stringify(v) }),
    onSuccess: () => {
      setAsking(null);
      setReason("");
      onMoved();
    },
  });
  const mine = stepsFor(side, steps, user);
  if (!mine.length) return <span className="text-xs text-ink-faint">—</span>;
  const reasonError = move.error?.fields?.reason?.join(" ");

  return (
    <div className="space-y-2">
      <div className="flex flex-wrap gap-1.5">
        {mine.map((t) => (
          <Button
            key={t.to}
            type="button"
            size="sm"
            variant={t.to === "returned" ? "danger" : "secondary"}
            disabled={move.isPending}
            aria-label={`${stepLabels[t.to] ?? t.to} — side ${side.designation}`}
            onClick={() => (t.reasonRequired ? setAsking(t) : move.mutate({ to: t.to }))}
            data-testid={`step-${side.designation}-${t.to}`}
          >
            {stepLabels[t.to] ?? t.to}
          </Button>
        ))}
      </div>
      {asking ? (
        <form
          className="space-y-2 rounded-md border border-alarm/30 bg-alarm-wash/40 p-3"
          onSubmit={(e) => {
            e.preventDefault();
            move.mutate({ to: asking.to, reason: reason.trim() });
          }}
        >
          <label htmlFor={`${id}-reason`} className="block text-sm font-medium">
            Why does side {side.designation} go back?
          </label>
          <textarea
            id={`${id}-reason`}
            value={reason}
            onChange={(e) => setReason(e.target.value)}
            required
            rows={3}
            aria-invalid={reasonError ? true : undefined}
            className="block w-full rounded-md border border-paper-edge bg-white px-3 py-2 text-sm"
            placeholder="What the engineer should redo or check"
          />
          {reasonError ? <p className="text-xs font-medium text-alarm">{reasonError}</p> : null}
          <div className="flex gap-2">
            <Button type="submit" size="sm" variant="danger" disabled={!reason.trim() || move.isPending}>
              Return side {side.designation}
            </Button>
            <Button type="button" size="sm" variant="quiet" onClick={() => setAsking(null)}>
              Cancel
            </Button>
          </div>
        </form>
      ) : null}
      {move.error && !reasonError ? (
        <p role="alert" className="text-xs font-medium text-alarm">
          {move.error.message}
        </p>
      ) : null}
    </div>
  );
}
