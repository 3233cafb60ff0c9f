/** Rillbook's mark: a disc's spiral of grooves with a single amber rill. */
export function GrooveMark({ size = 28, className }: { size?: number; className?: string }) {
  const rings = [13, 11, 9, 7];
  return (
    <svg width={size} height={size} viewBox="0 0 32 32" aria-hidden className={className}>
      <circle cx="16" cy="16" r="15" fill="#151b1d" />
      {rings.map((r) => (
        <circle key={r} cx="16" cy="16" r={r} fill="none" stroke="#3b474c" strokeWidth="0.8" />
      ))}
      <path
        d="M16 3 A13 13 0 0 1 29 16"
        fill="none"
        stroke="#e39a4f"
        strokeWidth="1.6"
        strokeLinecap="round"
      />
      <circle cx="16" cy="16" r="4" fill="#a9591a" />
      <circle cx="16" cy="16" r="0.9" fill="#151b1d" />
    </svg>
  );
}
