"use client";
/**
 * The fixity cycle (how often the worker re-reads every stored file; admins change
 * it) and a check of one disc's files now. The worker takes a queued check within
 * seconds; its results arrive as fixity events of that disc, which we poll for.
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect, useId, useState } from "react";
import { when } from "@/components/catalogue/format";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { useLabSettings } from "@/hooks/use-lab-settings";
import { useTimePassed } from "@/hooks/use-time-passed";
import { AppError } from "@/lib/http/errors";
import { fetchJson } from "@/lib/http/client";
import { DiscPicker } from "./disc-picker";
import type { AuditEvent, DiscPick } from "./types";

export function FixityCycle({ canEdit }: { canEdit: boolean }) {
  const uid = useId();
  const queryClient = useQueryClient();
  const settings = useLabSettings();
  const [draft, setDraft] = useState<string | null>(null);
  const [saving, setSaving] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [saved, setSaved] = useState(false);
  const days = settings.data?.fixityCycleDays;
  const value = draft ?? (days !== undefined ? String(days) : "");

  const save = async () => {
    setSaving(true);
    setError(null);
    setSaved(false);
    try {
      await fetchJson("/api/settings", { method: "PATCH", body: JSON.stringify({ fixityCycleDays: value }) });
      await queryClient.invalidateQueries({ queryKey: ["settings"] });
      setDraft(null);
      setSaved(true);
    } catch (err) {
      setError(
        err instanceof AppError && err.fields?.fixityCycleDays
          ? err.fields.fixityCycleDays.join(" ")
          : err instanceof Error
            ? err.message
            : String(err),
      );
    } finally {
      setSaving(false);
    }
  };

  if (!canEdit) {
    return (
      <p className="text-sm" data-testid="fixity-cycle">
        The worker re-reads every stored file at least every <strong>{days ?? "…"} days</strong>. An admin
        sets the cycle.
      </p>
    );
  }
  return (
    <form
      className="space-y-2"
      onSubmit={(e) => {
        e.preventDefault();
        void save();
      }}
      noValidate
      data-testid="fixity-cycle"
    >
      <label htmlFor={`${uid}-days`} className="block text-sm font-medium">
        Re-check every stored file every
      </label>
      <div className="flex flex-wrap items-center gap-2">
        <input
          id={`${uid}-days`}
          type="number"
          min={1}
          max={3650}
          step={1}
          inputMode="numeric"
          value={value}
          onChange={(e) => {
            setDraft(e.target.value);
            setSaved(false);
          }}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${uid}-error` : `${uid}-hint`}
          className="h-9 w-24 rounded-md border border-paper-edge bg-white px-3 font-mono text-sm"
          data-testid="fixity-cycle-days"
        />
        <span className="text-sm">days</span>
        <Button
          type="submit"
          size="sm"
          variant="secondary"
          disabled={saving || draft === null || value === String(days)}
          data-testid="fixity-cycle-save"
        >
          {saving ? "Saving…" : "Save"}
        </Button>
        {saved ? (
          <span role="status" className="text-xs font-medium text-moss">
            Saved; the change is in the log.
          </span>
        ) : null}
      </div>
      {error ? (
        <p id={`${uid}-error`} role="alert" className="text-xs font-medium text-alarm">
          {error}
        </p>
      ) : (
        <p id={`${uid}-hint`} className="text-xs text-ink-faint">
          The worker checks files whose last check is older than this. Shorter cycles read the bucket more
          often.
        </p>
      )}
    </form>
  );
}

interface RunState {
  disc: DiscPick;
  queued: number;
  askedAt: number;
  /** When this page asked (its own clock), for the wait on the worker. */
  startedAt: number;
}

/** Poll for this long before saying the results have not all come in. */
const WAIT_MS = 90_000;

export function FixityRun({ initialDisc }: { initialDisc: DiscPick | null }) {
  const queryClient = useQueryClient();
  const [disc, setDisc] = useState<DiscPick | null>(initialDisc);
  const [run, setRun] = useState<RunState | null>(null);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);

  // Follow the disc named in the URL when it changes, not on every render.
  const initialId = initialDisc?.id ?? null;
  const [followedId, setFollowedId] = useState(initialId);
  if (initialId !== followedId) {
    setFollowedId(initialId);
    if (initialDisc) setDisc(initialDisc);
  }
  const waitedTooLong = useTimePassed(run?.startedAt ?? null, WAIT_MS);

  const results = useQuery({
    queryKey: ["fixity-run", run?.disc.id, run?.askedAt],
    enabled: !!run && run.queued > 0,
    queryFn: () =>
      fetchJson<{ events: AuditEvent[] }>(
        `/api/provenance/events?disc=${run!.disc.id}&kind=side.fixity_checked&limit=200`,
      ),
    refetchInterval: (q) => {
      if (!run) return false;
      const got = (q.state.data?.events ?? []).filter(
        (e) => new Date(e.at).getTime() >= run.askedAt - 1000,
      ).length;
      return got >= run.queued || waitedTooLong ? false : 1000;
    },
  });
  const fresh = run
    ? (results.data?.events ?? []).filter((e) => new Date(e.at).getTime() >= run.askedAt - 1000)
    : [];
  const failed = fresh.filter((e) => (e.payload as { outcome?: string }).outcome !== "pass");
  const complete = !!run && fresh.length >= run.queued;
  useEffect(() => {
    if (!complete) return;
    void queryClient.invalidateQueries({ queryKey: ["fixity-alerts"] });
    void queryClient.invalidateQueries({ queryKey: ["audit-events"] });
  }, [complete, queryClient]);

  const start = async () => {
    if (!disc) return;
    setBusy(true);
    setError(null);
    setRun(null);
    try {
      const r = await fetchJson<{ queued: number; askedAt: number }>("/api/fixity", {
        method: "POST",
        body: JSON.stringify({ discId: disc.id }),
      });
      setRun({ disc, queued: r.queued, askedAt: r.askedAt, startedAt: Date.now() });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };

  return (
    <div className="space-y-3" data-testid="fixity-run">
      <DiscPicker value={disc} onChange={setDisc} label="Disc to check" />
      <Button
        type="button"
        onClick={() => void start()}
        disabled={!disc || busy}
        data-testid="fixity-run-start"
      >
        {busy ? "Asking…" : disc ? `Check ${disc.shelfMark} now` : "Check the disc now"}
      </Button>
      <div aria-live="polite">
        {error ? <Notice tone="error">{error}</Notice> : null}
        {run && run.queued === 0 ? (
          <Notice tone="info">{run.disc.shelfMark} has no stored files yet: nothing to check.</Notice>
        ) : null}
        {run && run.queued > 0 ? (
          complete ? (
            <Notice
              tone={failed.length ? "error" : "success"}
              title={
                failed.length
                  ? `${failed.length} of ${fresh.length} files failed`
                  : `All ${fresh.length} files passed`
              }
              testId="fixity-run-result"
            >
              {failed.length
                ? "See the alerts above and the disc's history below."
                : `Each stored file of ${run.disc.shelfMark} read back with its recorded SHA-256.`}
            </Notice>
          ) : waitedTooLong ? (
            <Notice tone="caution" title="Still waiting for the worker">
              {fresh.length} of {run.queued} results so far. Is the worker running? The checks stay queued and
              will run when it is.
            </Notice>
          ) : (
            <p className="text-sm text-ink-soft" data-testid="fixity-run-progress">
              Checking {run.disc.shelfMark}: {fresh.length} of {run.queued} file{run.queued === 1 ? "" : "s"}{" "}
              read back (asked {when(new Date(run.askedAt))})…
            </p>
          )
        ) : null}
      </div>
    </div>
  );
}
