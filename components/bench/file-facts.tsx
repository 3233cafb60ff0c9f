/** The particulars of a stored file (a flat transfer, an access copy), as the bench and the review list them. */
export function FileFact({ k, v, wide }: { k: string; v: string; wide?: boolean }) {
  return (
    <div className={wide ? "col-span-2" : undefined}>
      <dt className="text-ink-faint">{k}</dt>
      <dd className="break-words font-mono text-ink">{v}</dd>
    </div>
  );
}

export function Sha256Line({ value, testId }: { value: string | null; testId: string }) {
  return (
    <p
      className="mt-2 break-all rounded bg-paper/70 px-2 py-1 font-mono text-[0.7rem] text-ink-soft"
      data-testid={testId}
    >
      <span className="font-sans font-medium text-ink">SHA-256 </span>
      {value ?? "—"}
    </p>
  );
}
