"use client";
import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useCallback } from "react";

/** A string kept in the page's query string, so a view can be shared and reloaded. */
export function useUrlState(key: string, fallback = ""): [string, (value: string) => void] {
  const params = useSearchParams();
  const router = useRouter();
  const pathname = usePathname();
  const value = params.get(key) ?? fallback;
  const set = useCallback(
    (next: string) => {
      const q = new URLSearchParams(params.toString());
      if (next && next !== fallback) q.set(key, next);
      else q.delete(key);
      const s = q.toString();
      router.replace(s ? `${pathname}?${s}` : pathname, { scroll: false });
    },
    [params, router, pathname, key, fallback],
  );
  return [value, set];
}
