"use client";
/**
 * The file upload card shared by the catalogue and snapshot pages: its state, the card itself (what
 * the kind takes with a sample file, the drop zone with its file input, the name to save under, the
 * server's refusal with its issues, the save / discard buttons) and the list of a file's problems.
 * Each page keeps its own wording, ids and test ids through the props, and draws what it checked of
 * the loaded file (problems, counts, a preview) inside the card.
 */
import { useId, useRef, useState, type DragEvent, type ReactNode, type RefObject } from "react";
import { Alert, Button, Card, TextField, cx } from "@/components/ui";
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
    /**
     * Saves the loaded file with `action`: "Saving…" meanwhile, the server's refusal kept to be shown
     * in the card. An action that leads away from the page answers "leaving", and the button stays
     * "Saving…" until the page goes.
     */
    async save(action: (loaded: L) => Promise<"leaving" | void>) {
      if (!loaded) return;
      setSaving(true);
      setServerError(null);
      try {
        if ((await action(loaded)) !== "leaving") setSaving(false);
      } catch (error) {
        setServerError(error instanceof Error ? error : new Error(String(error)));
        setSaving(false);
      }
    },
  };
}

type UploadCardState<L> = ReturnType<typeof useUploadCard<L>>;

/**
 * A kind on its upload card. Its wording and test ids follow from the noun ("catalogue"): "Upload a
 * catalogue", "Catalogue name", "Save catalogue", and the ids sample-catalogue, catalogue-drop-zone,
 * catalogue-file, catalogue-name and catalogue-save.
 */
export interface UploadCardKind {
  noun: string;
  /** The sample file offered at the end of the card's first paragraph, as a data: URL; `format` in words ("CSV"). */
  sample: { href: string; fileName: string; format: string };
  dropLabel: string;
  accept: string;
  maxNameLength: number;
}

/**
 * The upload card: `intro` (what the kind takes and its limits) with the sample file, the drop
 * zone, `notice` under it (the last save), and once a file is loaded the name to save under, the
 * page's own view of the file (`children`), the server's refusal and the buttons.
 */
export function UploadCard<L>({
  card,
  kind,
  intro,
  onFile,
  notice,
  fieldLabel,
  canSave,
  onSave,
  children,
}: {
  card: UploadCardState<L>;
  kind: UploadCardKind;
  intro: ReactNode;
  onFile: (file: File) => void;
  notice?: ReactNode;
  /** Names a refusal's issue by its field (see UploadError). */
  fieldLabel?: (field: string) => string;
  canSave: boolean;
  onSave: () => void;
  children: ReactNode;
}) {
  const { noun } = kind;
  const Noun = `${noun[0].toUpperCase()}${noun.slice(1)}`;
  return (
    <Card title={`Upload a ${noun}`}>
      <div className="space-y-4">
        <p className="text-sm text-ink-muted">
          {intro}{" "}
          <a className="font-medium text-action hover:underline" href={kind.sample.href} download={kind.sample.fileName} data-testid={`sample-${noun}`}>
            Download a sample {noun} ({kind.sample.format})
          </a>
        </p>
        <FileDropZone label={kind.dropLabel} accept={kind.accept} inputRef={card.inputRef} onFile={onFile} testId={`${noun}-drop-zone`} inputTestId={`${noun}-file`} />
        {notice}
        {card.loaded ? (
          <div className="space-y-4">
            <TextField id={`${noun}-name`} label={`${Noun} name`} value={card.name} onChange={(event) => card.setName(event.target.value)} hint="Uploads under the same name become its next version." maxLength={kind.maxNameLength} />
            {children}
            <UploadError error={card.serverError} fieldLabel={fieldLabel} />
            <UploadActions saveLabel={`Save ${noun}`} saveTestId={`${noun}-save`} saving={card.saving} canSave={canSave} onSave={onSave} onDiscard={card.discard} />
          </div>
        ) : null}
      </div>
    </Card>
  );
}

/** A dashed zone to drop a file on, around a labelled file input; either way the file goes to `onFile`. */
function FileDropZone({
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
function UploadError({ error, showFields = false, fieldLabel }: { error: ApiClientError | Error | null; showFields?: boolean; fieldLabel?: (field: string) => string }) {
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
function UploadActions({ saveLabel, saveTestId, saving, canSave, onSave, onDiscard }: { saveLabel: string; saveTestId: string; saving: boolean; canSave: boolean; onSave: () => void; onDiscard: () => void }) {
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
