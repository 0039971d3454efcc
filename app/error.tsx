"use client";

import { Button } from "@/components/ui";

export default function ErrorPage({ reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <div className="mx-auto max-w-lg py-16 text-center" role="alert">
      <p className="font-mono text-sm tracking-[0.2em] text-kick">SOMETHING BROKE</p>
      <h1 className="mt-3 text-2xl font-bold tracking-tight">This page failed to load</h1>
      <p className="mt-3 text-ink-muted">It is our fault, not yours. Try again; if it keeps failing, the server log has the details.</p>
      <Button className="mt-8" onClick={reset}>
        Try again
      </Button>
    </div>
  );
}
