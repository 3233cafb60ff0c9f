"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { fetchJson } from "@/lib/http/client";
import { AppError } from "@/lib/http/errors";

/**
 * A register form's save: sends JSON to the route, shows the answer's message and field
 * errors beside the fields, and refreshes the server-rendered page when it is saved.
 */
export function useSave<T>() {
  const router = useRouter();
  const [saving, setSaving] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [fields, setFields] = useState<Record<string, string[]>>({});
  const save = async (url: string, method: "POST" | "PATCH", body: unknown): Promise<T | null> => {
    setSaving(true);
    setError(null);
    setFields({});
    try {
      const answer = await fetchJson<T>(url, { method, body: JSON.stringify(body) });
      router.refresh();
      return answer;
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
      if (err instanceof AppError && err.fields) setFields(err.fields);
      return null;
    } finally {
      setSaving(false);
    }
  };
  const field = (name: string) =>
    fields[name] ?? Object.entries(fields).find(([k]) => k.startsWith(`${name}.`))?.[1];
  return { save, saving, error, field, setError };
}
