"use client";
/**
 * The pieces of a file upload card shared by the catalogue and snapshot pages: its state, the drop
 * zone with its file input, the list of a file's problems, the server's refusal with its issues,
 * and the save / discard buttons. Each page keeps its own wording, ids and test ids through the props.
 */
import { useId, useRef, useState, type DragEvent, type ReactNode, type RefObject } from "react";
import { Alert, Button, cx } from "@/components/ui";
import { ApiClientError } from "@/lib/ui/api";

/** The state of an upload card: the file as loaded (`L`, the page's own), the name to save it under, saving, and the server's refusal. */
export function useUploadCard<L>() {
  const inputRef = useRef<HTMLInputElement>(null);
  const [loaded, setLoaded] = useState<L | null>(null);
  const [name, setName] = useState("");
  const [saving, setSaving] = useState(false);
  const [serverError, setServerError] = useState<ApiClientError | Error | null>(null);
  /** Forgets the loaded file and empties the file input (so the same file can be chosen again). */
  function clearFile() {
    setLoaded(null);
    if (inputRef.current) inputRef.current.value = "";
  }
  return {
    inputRef,
    loaded,
    setLoaded,
    name,
    setName,
    saving,
    setSaving,
    serverError,
    setServerError,
    clearFile,
    /** What Discard does: the file and the server's refusal are forgotten. */
    discard() {
      clearFile();
      setServerError(null);
    },
    /** Keeps what a save threw, to show it with UploadError. */
    failed(error: unknown) {
      setServerError(error instanceof Error ? error : new Error(String(error)));
    },
  };
}

/** A dashed zone to drop a file on, around a labelled file input; either way the file goes to `onFile`. */
export function FileDropZone({
  label,
  accept,
  inputRef,
  onFile,
  testId,
  inputTestId,
}: {
  label: string;
  accept: string;
  inputRef: RefObject<HTMLInputElement | null>;
  onFile: (file: File) => void;
  testId: string;
  inputTestId: string;
}) {
  const inputId = useId();
  const [dragging, setDragging] = useState(false);

  function onDrop(event: DragEvent<HTMLDivElement>) {
    event.preventDefault();
    setDragging(false);
    const file = event.dataTransfer.files[0];
    if (file) onFile(file);
  }

  return (
    <div
      onDragOver={(event) => {
        event.preventDefault();
        setDragging(true);
      }}
      onDragLeave={() => setDragging(false)}
      onDrop={onDrop}
      className={cx("rounded-lg border-2 border-dashed p-6 text-center", dragging ? "border-action bg-surface-muted" : "border-line")}
      data-testid={testId}
    >
      <label htmlFor={inputId} className="block text-sm font-medium">
        {label}
      </label>
      <input
        ref={inputRef}
        id={inputId}
        type="file"
        accept={accept}
        className="mx-auto mt-2 block text-sm"
        data-testid={inputTestId}
        onChange={(event) => {
          const file = event.target.files?.[0];
          if (file) onFile(file);
        }}
      />
    </div>
  );
}

/** Every problem of a file at once: "N problems in file; fix them {fixWhere}:" and one item per problem. */
export function FileProblems<P>({
  problems,
  fileName,
  fixWhere,
  testId,
  itemTestId,
  renderProblem,
}: {
  problems: readonly P[];
  fileName: string;
  /** Where and how to fix them, e.g. "in the file and choose it again". */
  fixWhere: string;
  testId: string;
  itemTestId: string;
  renderProblem: (problem: P) => ReactNode;
}) {
  return (
    <div role="alert" className="rounded-md border border-danger/60 bg-danger-soft p-3 text-sm" data-testid={testId}>
      <p className="font-semibold">
        {problems.length === 1 ? "1 problem" : `${problems.length} problems`} in {fileName}; fix {problems.length === 1 ? "it" : "them"} {fixWhere}:
      </p>
      <ul className="mt-2 list-disc space-y-1 pl-5">
        {problems.map((problem, i) => (
          <li key={i} data-testid={itemTestId}>
            {renderProblem(problem)}
          </li>
        ))}
      </ul>
    </div>
  );
}

/** The server's refusal of an upload: its message, and its issues when there are several (with their fields if `showFields`). */
/**
 * What a save threw. `fieldLabel` names each issue's place in words (the issue's `field` is the
 * API's machine path); `showFields` without it shows that path as code.
 */
export function UploadError({ error, showFields = false, fieldLabel }: { error: ApiClientError | Error | null; showFields?: boolean; fieldLabel?: (field: string) => string }) {
  if (!error) return null;
  return (
    <Alert>
      {error.message}
      {error instanceof ApiClientError && error.issues.length > 1 ? (
        <ul className="mt-1 list-disc pl-5" data-testid="upload-error-issues">
          {error.issues.map((issue, i) =>
            fieldLabel ? (
              <li key={i}>
                <span className="font-medium">{fieldLabel(issue.field)}</span>: {issue.message}
              </li>
            ) : showFields ? (
              <li key={i}>
                <code className="font-mono text-xs">{issue.field}</code>: {issue.message}
              </li>
            ) : (
              <li key={i}>{issue.message}</li>
            ),
          )}
        </ul>
      ) : null}
    </Alert>
  );
}

/** Save (disabled until the file can be saved; "Saving…" meanwhile) and Discard. */
export function UploadActions({ saveLabel, saveTestId, saving, canSave, onSave, onDiscard }: { saveLabel: string; saveTestId: string; saving: boolean; canSave: boolean; onSave: () => void; onDiscard: () => void }) {
  return (
    <div className="flex gap-3">
      <Button onClick={onSave} disabled={!canSave} data-testid={saveTestId}>
        {saving ? "Saving…" : saveLabel}
      </Button>
      <Button variant="secondary" onClick={onDiscard}>
        Discard
      </Button>
    </div>
  );
}
