"use client";
/**
 * Approve, or return with a reason. The server decides: it refuses an approval by
 * anyone who made the transfer, chose the curve or rendered the access copy, and
 * before both files have passed fixity since they were stored. Its refusal is shown
 * as it gives it.
 */
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { AppError } from "@/lib/http/errors";
import { fetchJson } from "@/lib/http/client";

export function DecisionPanel({
  sideId,
  fixityMissing,
  onDecided,
}: {
  sideId: string;
  fixityMissing: string[];
  onDecided: (decision: "approved" | "returned") => void;
}) {
  const uid = useId();
  const [reason, setReason] = useState("");
  const [reasonError, setReasonError] = useState<string | null>(null);
  const [busy, setBusy] = useState<"approved" | "returned" | null>(null);
  const [refusal, setRefusal] = useState<{ title: string; message: string } | null>(null);

  const decide = async (decision: "approved" | "returned") => {
    setRefusal(null);
    setReasonError(null);
    if (decision === "returned" && !reason.trim()) {
      setReasonError("Say why the side goes back, so the engineer knows what to fix.");
      document.getElementById(`${uid}-reason`)?.focus();
      return;
    }
    setBusy(decision);
    try {
      await fetchJson(`/api/sides/${sideId}/review`, {
        method: "POST",
        body: JSON.stringify(decision === "approved" ? { decision } : { decision, reason: reason.trim() }),
      });
      setReason("");
      onDecided(decision);
    } catch (err) {
      const message = err instanceof Error ? err.message : String(err);
      if (err instanceof AppError && err.fields?.reason) setReasonError(err.fields.reason.join(" "));
      const status = err instanceof AppError ? err.status : 0;
      const title =
        decision === "approved"
          ? status === 403
            ? "You may not approve this side"
            : "Not approved"
          : "Not returned";
      setRefusal({ title, message });
    } finally {
      setBusy(null);
    }
  };

  return (
    <div className="space-y-4" data-testid="decision-panel">
      <div className="space-y-2">
        <Button
          type="button"
          className="w-full"
          onClick={() => void decide("approved")}
          disabled={!!busy}
          data-testid="review-approve"
        >
          {busy === "approved" ? "Approving…" : "Approve"}
        </Button>
        {fixityMissing.length ? (
          <p className="text-xs text-ink-soft" data-testid="approve-needs-fixity">
            Approval waits for a passing fixity check of {fixityMissing.join(" and ")} since{" "}
            {fixityMissing.length > 1 ? "they were" : "it was"} stored: use “Check fixity now”.
          </p>
        ) : (
          <p className="text-xs text-ink-faint">
            Both files have passed fixity since they were stored. Someone who did not make this transfer,
            choose its curve or render it approves it.
          </p>
        )}
      </div>

      <div aria-live="assertive">
        {refusal ? (
          <Notice tone="error" title={refusal.title} testId="review-refusal">
            {refusal.message}
          </Notice>
        ) : null}
      </div>

      <form
        className="space-y-2 border-t border-paper-edge pt-4"
        onSubmit={(e) => {
          e.preventDefault();
          void decide("returned");
        }}
        noValidate
      >
        <label htmlFor={`${uid}-reason`} className="block text-sm font-medium">
          Why it goes back <span className="font-normal text-ink-faint">(required to return)</span>
        </label>
        <textarea
          id={`${uid}-reason`}
          value={reason}
          onChange={(e) => {
            setReason(e.target.value);
            if (reasonError) setReasonError(null);
          }}
          rows={4}
          maxLength={4000}
          required
          aria-invalid={reasonError ? true : undefined}
          aria-describedby={reasonError ? `${uid}-reason-error` : `${uid}-reason-hint`}
          placeholder="What to listen for, what to change: the curve, the speed, the transfer…"
          className={`block w-full rounded-md border bg-white px-3 py-2 text-sm ${reasonError ? "border-alarm" : "border-paper-edge"}`}
          data-testid="review-reason"
        />
        {reasonError ? (
          <p
            id={`${uid}-reason-error`}
            role="alert"
            className="text-xs font-medium text-alarm"
            data-testid="review-reason-error"
          >
            {reasonError}
          </p>
        ) : (
          <p id={`${uid}-reason-hint`} className="text-xs text-ink-faint">
            The engineer gets it by e-mail and sees it on the bench.
          </p>
        )}
        <Button
          type="submit"
          variant="danger"
          className="w-full"
          disabled={!!busy}
          data-testid="review-return"
        >
          {busy === "returned" ? "Returning…" : "Return to the engineer"}
        </Button>
      </form>
    </div>
  );
}
