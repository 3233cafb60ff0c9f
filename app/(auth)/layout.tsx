import type { ReactNode } from "react";
import { GrooveMark } from "@/components/shell/groove-mark";

export default function AuthLayout({ children }: { children: ReactNode }) {
  return (
    <div className="grid min-h-screen lg:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <aside className="relative hidden overflow-hidden bg-lacquer p-12 text-lacquer-text lg:flex lg:flex-col lg:justify-between">
        <div className="flex items-center gap-3">
          <GrooveMark size={36} />
          <span className="font-display text-2xl font-semibold text-white">Rillbook</span>
        </div>
        <svg
          aria-hidden
          viewBox="0 0 400 400"
          className="pointer-events-none absolute -right-40 top-1/2 h-[36rem] w-[36rem] -translate-y-1/2 opacity-60"
        >
          {Array.from({ length: 34 }, (_, i) => (
            <circle
              key={i}
              cx="200"
              cy="200"
              r={40 + i * 4.6}
              fill="none"
              stroke={i === 21 ? "#e39a4f" : "#34403f"}
              strokeWidth={i === 21 ? 1.4 : 0.7}
            />
          ))}
          <circle cx="200" cy="200" r="30" fill="#a9591a" />
        </svg>
        <div className="relative max-w-sm space-y-4">
          <p className="font-display text-3xl leading-tight text-white">
            Every side, played back the way it was cut.
          </p>
          <p className="text-sm text-lacquer-text/80">
            Catalogue the discs, choose and document each side&apos;s playback curve, keep the flat transfer
            untouched and the record of every choice.
          </p>
        </div>
      </aside>
      <main className="flex items-center justify-center px-6 py-12">
        <div className="w-full max-w-md">
          <div className="mb-8 flex items-center gap-3 lg:hidden">
            <GrooveMark size={32} />
            <span className="font-display text-2xl font-semibold">Rillbook</span>
          </div>
          {children}
        </div>
      </main>
    </div>
  );
}
