"use client";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { SessionProvider } from "next-auth/react";
import { type ReactNode, useState } from "react";
import { AppError } from "@/lib/http/errors";

// One retry for a network or server failure; a refusal (4xx) answers the same the second time.
const retry = (failures: number, error: unknown) =>
  failures < 1 && !(error instanceof AppError && error.status < 500);

export function Providers({ children }: { children: ReactNode }) {
  const [client] = useState(
    () => new QueryClient({ defaultOptions: { queries: { staleTime: 10_000, retry } } }),
  );
  return (
    <SessionProvider>
      <QueryClientProvider client={client}>{children}</QueryClientProvider>
    </SessionProvider>
  );
}
