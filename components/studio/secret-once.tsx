"use client";

import type { ReactNode } from "react";
import { CopyButton } from "@/components/copy-button";
import { Button } from "@/components/ui";

/**
 * A secret the server shows only once (an API token, a webhook signing secret): set apart, with a
 * copy button, until the user says it is stored.
 */
export function SecretOnce({
  id,
  secretTestId,
  title,
  children,
  secret,
  onHide,
}: {
  /** data-testid of the panel, and the stem of its heading's id. */
  id: string;
  secretTestId: string;
  title: ReactNode;
  children: ReactNode;
  secret: string;
  onHide: () => void;
}) {
  return (
    <section className="rounded-lg border-2 border-ok bg-ok-soft p-5" aria-labelledby={`${id}-heading`} data-testid={id}>
      <h2 id={`${id}-heading`} className="font-semibold text-ink">
        {title}
      </h2>
      <p className="mt-1 text-sm text-ink">{children}</p>
      <div className="mt-3 flex flex-wrap items-center gap-3">
        <code className="min-w-0 flex-1 break-all rounded-md border border-line bg-surface px-3 py-2 font-mono text-sm" data-testid={secretTestId}>
          {secret}
        </code>
        <CopyButton value={secret} label="Copy secret" />
      </div>
      <Button variant="ghost" className="mt-3" onClick={onHide}>
        I have stored it — hide
      </Button>
    </section>
  );
}
