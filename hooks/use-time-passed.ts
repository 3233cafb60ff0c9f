"use client";
import { useEffect, useState } from "react";

/**
 * True once `ms` milliseconds have passed since `startedAt` (a `Date.now()` value), false
 * while `startedAt` is null. A timer re-renders the component when the time comes, so
 * nothing reads the clock during render.
 */
export function useTimePassed(startedAt: number | null, ms: number): boolean {
  const [passedFor, setPassedFor] = useState<number | null>(null);
  useEffect(() => {
    if (startedAt === null) return;
    const timer = setTimeout(() => setPassedFor(startedAt), Math.max(0, startedAt + ms - Date.now()));
    return () => clearTimeout(timer);
  }, [startedAt, ms]);
  return startedAt !== null && passedFor === startedAt;
}
