"use client";
/**
 * A modal confirmation for actions that cannot be taken back in one click (cancelling a sweep,
 * suspending a studio, changing a role, revoking). Built on the native <dialog> element: focus is
 * trapped and Escape cancels without our own code. With `reason`, the action needs a written reason
 * (kept in the audit log) before it can be confirmed.
 */
import { useEffect, useId, useRef, useState, type ReactNode } from "react";
import { Alert, Button } from "@/components/ui";

export interface ConfirmDialogProps {
  open: boolean;
  title: string;
  /** What will happen, in the user's words. */
  children: ReactNode;
  confirmLabel: string;
  /** Destructive actions confirm with the danger button. */
  danger?: boolean;
  /** Ask for a reason (at least one non-blank character) and pass it to onConfirm. */
  reason?: { label: string; hint?: string };
  busy?: boolean;
  error?: string | null;
  onConfirm: (reason: string) => void;
  onCancel: () => void;
  testId?: string;
}

export function ConfirmDialog({ open, title, children, confirmLabel, danger, reason, busy, error, onConfirm, onCancel, testId }: ConfirmDialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const headingId = useId();
  const reasonId = useId();
  const [text, setText] = useState("");
  const [touched, setTouched] = useState(false);

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) {
      setText("");
      setTouched(false);
      dialog.showModal();
    } else if (!open && dialog.open) dialog.close();
  }, [open]);

  const reasonMissing = reason !== undefined && text.trim() === "";
  return (
    <dialog
      ref={ref}
      aria-labelledby={headingId}
      data-testid={testId}
      className="m-auto w-[min(32rem,calc(100vw-2rem))] rounded-lg border border-line bg-surface p-0 text-ink shadow-xl backdrop:bg-ink/40"
      onCancel={(event) => {
        // Escape: close through the parent's state so the two never disagree.
        event.preventDefault();
        if (!busy) onCancel();
      }}
    >
      <form
        method="dialog"
        className="space-y-4 p-5"
        onSubmit={(event) => {
          event.preventDefault();
          setTouched(true);
          if (reasonMissing || busy) return;
          onConfirm(text.trim());
        }}
      >
        <h2 id={headingId} className="text-lg font-semibold">
          {title}
        </h2>
        <div className="space-y-2 text-sm">{children}</div>
        {reason ? (
          <div className="space-y-1">
            <label htmlFor={reasonId} className="block text-sm font-medium">
              {reason.label}
            </label>
            <textarea
              id={reasonId}
              value={text}
              onChange={(event) => setText(event.target.value)}
              maxLength={500}
              rows={3}
              aria-invalid={touched && reasonMissing ? true : undefined}
              aria-describedby={touched && reasonMissing ? `${reasonId}-error` : undefined}
              className="block w-full rounded-md border border-line bg-surface px-3 py-2 text-sm aria-[invalid=true]:border-danger"
            />
            {touched && reasonMissing ? (
              <p id={`${reasonId}-error`} className="text-sm text-danger">
                Write a reason: it is kept in the audit log.
              </p>
            ) : reason.hint ? (
              <p className="text-xs text-ink-muted">{reason.hint}</p>
            ) : null}
          </div>
        ) : null}
        {error ? <Alert>{error}</Alert> : null}
        <div className="flex flex-wrap justify-end gap-2">
          <Button variant="ghost" onClick={onCancel} disabled={busy}>
            Keep as it is
          </Button>
          <Button type="submit" variant={danger ? "danger" : "primary"} disabled={busy}>
            {busy ? "Working…" : confirmLabel}
          </Button>
        </div>
      </form>
    </dialog>
  );
}
