"use client";

import { useQuery } from "@tanstack/react-query";
import { Alert, Button, Card, EmptyState, LoadingRows, PageHeading } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import { queryKeys } from "@/lib/ui/queries";
import type { MailMessage } from "@/lib/ui/types";

/** The local mailbox: what the in-process fake SMTP server captured, newest first, links clickable. */
export function Mailbox() {
  const mail = useQuery({
    queryKey: queryKeys.mail,
    queryFn: async () => (await apiFetch<{ messages: MailMessage[] }>("/api/v1/dev/mail")).messages,
    // New mail arrives while you wait on a sign-in link; poll gently.
    refetchInterval: 3_000,
  });
  return (
    <div>
      <PageHeading eyebrow="Local development" title="Mailbox">
        No SMTP server is configured, so Kickdrift captures every e-mail it sends here instead of delivering it. Set SMTP_URL to send real
        mail; this page then disappears.
      </PageHeading>
      <div className="mb-4 flex items-center gap-3">
        <Button variant="secondary" onClick={() => void mail.refetch()} disabled={mail.isFetching}>
          {mail.isFetching ? "Refreshing…" : "Refresh"}
        </Button>
        {mail.data ? <span className="text-sm text-ink-muted">{mail.data.length} message{mail.data.length === 1 ? "" : "s"}</span> : null}
      </div>
      {mail.isPending ? (
        <LoadingRows label="messages" />
      ) : mail.isError ? (
        <Alert>{errorMessage(mail.error)}</Alert>
      ) : mail.data.length === 0 ? (
        <EmptyState>No messages yet. Sign-in links, invitations and password resets will appear here.</EmptyState>
      ) : (
        <ul className="space-y-4" data-testid="mail-list">
          {mail.data.map((message) => (
            <li key={message.id} data-testid="mail-message">
              <Card>
                <div className="flex flex-wrap items-baseline justify-between gap-2">
                  <h2 className="font-semibold">{message.subject}</h2>
                  <span className="font-mono text-xs text-ink-muted">{formatDateTime(message.receivedAt)}</span>
                </div>
                <p className="mt-1 text-sm text-ink-muted">
                  To <span className="font-mono">{message.to}</span>
                </p>
                {message.links.length > 0 ? (
                  <ul className="mt-3 space-y-1" aria-label="Links in this message">
                    {message.links.map((link) => (
                      <li key={link}>
                        <a href={link} className="break-all font-mono text-sm text-action underline underline-offset-2">
                          {link}
                        </a>
                      </li>
                    ))}
                  </ul>
                ) : null}
                <details className="mt-3">
                  <summary className="cursor-pointer text-sm text-ink-muted">Message text</summary>
                  <pre className="mt-2 whitespace-pre-wrap rounded-md bg-surface-muted p-3 font-mono text-xs">{message.text}</pre>
                </details>
              </Card>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
