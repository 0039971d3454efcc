"use client";

import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { SessionProvider } from "next-auth/react";
import { useState, type ReactNode } from "react";
import { ApiClientError } from "@/lib/ui/api";

export function Providers({ children }: { children: ReactNode }) {
  const [queryClient] = useState(
    () =>
      new QueryClient({
        defaultOptions: {
          queries: {
            staleTime: 5_000,
            // A 4xx will not change by asking again; retry only network and server failures, once.
            retry: (failureCount, error) => !(error instanceof ApiClientError && error.status < 500) && failureCount < 1,
            refetchOnWindowFocus: false,
          },
        },
      }),
  );
  return (
    <SessionProvider>
      <QueryClientProvider client={queryClient}>{children}</QueryClientProvider>
    </SessionProvider>
  );
}
