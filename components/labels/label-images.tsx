"use client";
/**
 * A disc's label images: thumbnails (made on the server) of each side's label and of the
 * sleeve, each opening the stored original; and, for archivists and admins, adding one
 * (the file goes straight to the bucket by a presigned URL, then the server checks it) and
 * withdrawing one added by mistake, with a reason (the file itself is kept on record).
 */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { createSHA256 } from "hash-wasm";
import { useId, useState } from "react";
import { Button } from "@/components/ui/button";
import { controlClass, SelectField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { fetchJson } from "@/lib/http/client";

export interface LabelImageJson {
  id: string;
  kind: "label" | "sleeve";
  sideId: string | null;
  side: string | null;
  fileName: string;
  format: "jpeg" | "png" | "tiff";
  width: number | null;
  height: number | null;
  bytes: number;
  sha256: string;
  storedAt: string;
  uploadedBy: string;
  thumbnailUrl: string;
  downloadUrl: string;
}

/** The file's type as the server takes it: from the browser, or from the name's ending when the browser gives none. */
function typeOf(file: File): string {
  if (file.type) return file.type;
  const ext = file.name.toLowerCase().split(".").pop() ?? "";
  return (
    { jpg: "image/jpeg", jpeg: "image/jpeg", png: "image/png", tif: "image/tiff", tiff: "image/tiff" }[ext] ??
    "application/octet-stream"
  );
}

async function sha256Of(file: File): Promise<string> {
  const hasher = await createSHA256();
  const reader = file.stream().getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    hasher.update(value);
  }
  return hasher.digest("hex");
}

function caption(img: LabelImageJson): string {
  return img.kind === "sleeve" ? "Sleeve" : `Side ${img.side ?? "?"} label`;
}

/** Withdrawing an image added by mistake: a reason, then the server's answer. */
function WithdrawForm({
  img,
  onWithdrawn,
  onCancel,
}: {
  img: LabelImageJson;
  onWithdrawn: () => Promise<void>;
  onCancel: () => void;
}) {
  const uid = useId();
  const [reason, setReason] = useState("");
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  return (
    <form
      className="space-y-2 rounded-lg border border-alarm/30 bg-white p-3"
      onSubmit={(e) => {
        e.preventDefault();
        setBusy(true);
        setError(null);
        fetchJson(`/api/label-images/${img.id}/withdraw`, {
          method: "POST",
          body: JSON.stringify({ reason }),
        })
          .then(onWithdrawn)
          .catch((err: unknown) => setError(err instanceof Error ? err.message : String(err)))
          .finally(() => setBusy(false));
      }}
      data-testid="label-image-withdraw-form"
    >
      <p className="text-sm font-medium">
        Withdraw “{img.fileName}” ({caption(img)})
      </p>
      <p className="text-xs text-ink-soft">
        For an image added by mistake. It leaves this disc&rsquo;s page, its record and its packages; the file
        stays on record with its SHA-256, and the timeline keeps your reason. This cannot be undone: add the
        right image afterwards.
      </p>
      <label htmlFor={`${uid}-reason`} className="block text-sm font-medium">
        Why is it withdrawn?
      </label>
      <textarea
        id={`${uid}-reason`}
        rows={2}
        value={reason}
        onChange={(e) => setReason(e.target.value)}
        placeholder="The label of another disc of the accession"
        className={controlClass(!!error)}
        data-testid="label-image-withdraw-reason"
      />
      {error ? (
        <p role="alert" className="text-xs font-medium text-alarm">
          {error}
        </p>
      ) : null}
      <div className="flex gap-2">
        <Button
          type="submit"
          variant="danger"
          size="sm"
          disabled={busy || !reason.trim()}
          data-testid="label-image-withdraw"
        >
          {busy ? "Withdrawing…" : "Withdraw the image"}
        </Button>
        <Button type="button" variant="quiet" size="sm" onClick={onCancel}>
          Keep it
        </Button>
      </div>
    </form>
  );
}

export function LabelImages({
  discId,
  sides,
  canAdd,
  onlySideId,
}: {
  discId: string;
  sides: { id: string; designation: string }[];
  canAdd: boolean;
  /** On the bench and the review page: that side's label first, and the sleeve. */
  onlySideId?: string;
}) {
  const uid = useId();
  const queryClient = useQueryClient();
  const list = useQuery({
    queryKey: ["label-images", discId],
    queryFn: () => fetchJson<{ labelImages: LabelImageJson[] }>(`/api/discs/${discId}/label-images`),
  });
  const [target, setTarget] = useState<string>(sides[0] ? `label:${sides[0].id}` : "sleeve");
  const [file, setFile] = useState<File | null>(null);
  const [busy, setBusy] = useState(false);
  const [said, setSaid] = useState<{ ok: boolean; text: string } | null>(null);
  const [withdrawing, setWithdrawing] = useState<LabelImageJson | null>(null);

  const all = list.data?.labelImages ?? [];
  const shown = onlySideId ? all.filter((i) => i.kind === "sleeve" || i.sideId === onlySideId) : all;

  const add = async (form: HTMLFormElement) => {
    if (!file) return;
    setBusy(true);
    setSaid(null);
    try {
      const [kind, sideId] = target.split(":") as ["label" | "sleeve", string | undefined];
      const contentType = typeOf(file);
      const started = await fetchJson<{ labelImageId: string; url: string; headers: Record<string, string> }>(
        `/api/discs/${discId}/label-images`,
        {
          method: "POST",
          body: JSON.stringify({ kind, sideId, fileName: file.name, bytes: file.size, contentType }),
        },
      );
      const sha256 = await sha256Of(file);
      const put = await fetch(started.url, { method: "PUT", headers: started.headers, body: file });
      if (!put.ok) throw new Error(`The file store answered ${put.status}: try again in a moment.`);
      await fetchJson(`/api/label-images/${started.labelImageId}/complete`, {
        method: "POST",
        body: JSON.stringify({ sha256 }),
      });
      await queryClient.invalidateQueries({ queryKey: ["label-images", discId] });
      // The disc's timeline shows the new event.
      void queryClient.invalidateQueries({ queryKey: ["disc-events", discId] });
      setSaid({ ok: true, text: `“${file.name}” is stored with its SHA-256 and a thumbnail.` });
      setFile(null);
      form.reset();
    } catch (err) {
      setSaid({ ok: false, text: err instanceof Error ? err.message : String(err) });
    } finally {
      setBusy(false);
    }
  };

  return (
    <div className="space-y-4" data-testid="label-images">
      {list.isPending ? (
        <p className="text-sm text-ink-faint">Loading…</p>
      ) : shown.length ? (
        <ul className="grid grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] gap-3">
          {shown.map((img) => (
            <li key={img.id} className="space-y-1" data-testid="label-image">
              <a
                href={img.downloadUrl}
                target="_blank"
                rel="noreferrer"
                className="block overflow-hidden rounded-lg border border-paper-edge bg-paper-deep"
                title={`Open ${img.fileName}`}
              >
                {/* eslint-disable-next-line @next/next/no-img-element -- thumbnails are made by the server and served by the app's own route */}
                <img
                  src={img.thumbnailUrl}
                  alt={`${caption(img)}: ${img.fileName}`}
                  className="aspect-square w-full object-contain"
                  loading="lazy"
                />
              </a>
              <p className="text-xs font-medium">{caption(img)}</p>
              <p className="text-[0.7rem] text-ink-faint">
                {img.format.toUpperCase()}
                {img.width && img.height ? ` · ${img.width}×${img.height}` : ""} ·{" "}
                <span className="font-mono" title={`SHA-256 ${img.sha256}`}>
                  {img.sha256.slice(0, 10)}…
                </span>
              </p>
              {canAdd ? (
                <button
                  type="button"
                  className="text-[0.7rem] text-ink-faint underline underline-offset-2 hover:text-alarm"
                  onClick={() => setWithdrawing(img)}
                  data-testid="label-image-withdraw-open"
                >
                  Withdraw…
                </button>
              ) : null}
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-ink-soft" data-testid="label-images-none">
          No label images yet{onlySideId ? " for this side or the sleeve" : ""}.
          {canAdd ? "" : " An archivist adds photographs or scans of the labels and the sleeve."}
        </p>
      )}

      {canAdd && withdrawing ? (
        <WithdrawForm
          key={withdrawing.id}
          img={withdrawing}
          onCancel={() => setWithdrawing(null)}
          onWithdrawn={async () => {
            setWithdrawing(null);
            setSaid({ ok: true, text: `“${withdrawing.fileName}” is withdrawn; the timeline keeps why.` });
            await queryClient.invalidateQueries({ queryKey: ["label-images", discId] });
            void queryClient.invalidateQueries({ queryKey: ["disc-events", discId] });
          }}
        />
      ) : null}

      {canAdd ? (
        <form
          className="space-y-3 border-t border-paper-edge pt-4"
          onSubmit={(e) => {
            e.preventDefault();
            void add(e.currentTarget);
          }}
          data-testid="label-image-form"
        >
          <div className="grid gap-3 sm:grid-cols-2">
            <SelectField
              id={`${uid}-what`}
              label="It shows"
              value={target}
              onChange={(e) => setTarget(e.target.value)}
            >
              {sides.map((s) => (
                <option key={s.id} value={`label:${s.id}`}>
                  Side {s.designation} label
                </option>
              ))}
              <option value="sleeve">The sleeve</option>
            </SelectField>
            <div className="space-y-1">
              <label htmlFor={`${uid}-file`} className="block text-sm font-medium">
                Photograph or scan
              </label>
              <input
                id={`${uid}-file`}
                type="file"
                accept="image/jpeg,image/png,image/tiff,.jpg,.jpeg,.png,.tif,.tiff"
                className="block w-full text-sm"
                onChange={(e) => setFile(e.target.files?.[0] ?? null)}
                data-testid="label-image-file"
              />
              <p className="text-xs text-ink-faint">JPEG, PNG or TIFF, up to 512 MiB.</p>
            </div>
          </div>
          <Button
            type="submit"
            variant="secondary"
            size="sm"
            disabled={!file || busy}
            data-testid="label-image-add"
          >
            {busy ? "Adding…" : "Add the image"}
          </Button>
          {said ? (
            <Notice tone={said.ok ? "success" : "error"} testId="label-image-said">
              {said.text}
            </Notice>
          ) : null}
        </form>
      ) : null}
    </div>
  );
}
