"use client";
/**
 * The sweep builder: a template or a scene, the scenario with the unit beside every field, up to
 * three axes, and a quote that follows the spec as it changes. The zod schema of the spec is the
 * form's resolver, so the form reports exactly the field paths the API reports.
 */
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQuery } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useEffect, useMemo, useState } from "react";
import { get, useForm, useWatch, type FieldPath } from "react-hook-form";
import { Alert, Button, Card, cx } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import type { SceneKind } from "@/lib/physics/types";
import { AXIS_ONLY_PATHS, CHOICE_PARAMETERS, NUMERIC_PARAMETERS, SCENE_KINDS, SPEC_LIMITS, parametersForScene, type NumericParameter, type SweepableParameter } from "@/lib/sweeps/parameters";
import { OPTIONAL_SCENE_PATHS, SPEC_DEFAULT_TOLERANCES, parseSweepSpec, scenarioValue, sweepSpecSchema, type SweepSpecInput } from "@/lib/sweeps/spec";
import type { Scenario } from "@/lib/physics/types";
import { SWEEP_TEMPLATES } from "@/lib/sweeps/templates";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { studioApiPath } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";
import { HelpPanel } from "@/components/help/verdict-help";
import { describeSpecField } from "@/lib/ui/spec-fields";
import { FRAME_STEP_PATH, formatFrameStep, ordinal, frameStepInputText, frameStepListText, parseFrameStep, parseFrameStepList } from "@/lib/ui/units";
import { formatMinutes, sweepsPath, type Quote, type Sweep } from "./sweep-api";
import { formatCompute } from "@/lib/billing/format";
import { formatPriceCents } from "@/lib/billing/packs";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering-rate";

type AxisInput = NonNullable<SweepSpecInput["axes"]>[number];
type FormPath = FieldPath<SweepSpecInput>;

/** A starting scene per kind when the user switches scenes (invented objects, SI units). */
const SCENE_DEFAULTS: Record<SceneKind, SweepSpecInput["scenario"]["scene"]> = {
  pair: { kind: "pair", massAKg: 0.17, massBKg: 0.17, radiusAM: 0.028, radiusBM: 0.028, speedAMPerS: 3, speedBMPerS: 0, offsetFraction: 0, gapM: 0.02 },
  wall: { kind: "wall", massKg: 0.05, radiusM: 0.02, speedMPerS: 4, angleDeg: 0, gapM: 0.02 },
  row: { kind: "row", count: 5, massKg: 0.17, radiusM: 0.028, strikerMassKg: 0.17, strikerSpeedMPerS: 2, spacingM: 0.001, gapM: 0.02 },
  box: { kind: "box", count: 40, massKg: 0.01, radiusM: 0.01, widthM: 0.5, heightM: 0.5, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
  // Three crates and a barrel rolling at a loading-bay wall (x = 0); upload a snapshot for a real floor.
  snapshot: {
    kind: "snapshot",
    bodies: [
      { xM: 0.5, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.1, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.7, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.1, yM: 1.0, vxMPerS: -3, vyMPerS: -0.5, massKg: 40, radiusM: 0.3 },
    ],
    walls: [
      { normalX: 1, normalY: 0, offsetM: 0 },
      { normalX: 0, normalY: 1, offsetM: 0 },
    ],
    gravityMPerS2: 0,
    speedScale: 1,
  },
  // A 4 kg supply crate released on a 15° loading ramp.
  slope: { kind: "slope", massKg: 4, radiusM: 0.2, angleDeg: 15, speedMPerS: 0, spinRadPerS: 0, gravityMPerS2: 9.81, body: "crate" },
  // Ten stacked loot coins, each nudged sideways by up to 1 % of its radius.
  stack: { kind: "stack", count: 10, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81, perturbationFraction: 0.01 },
};

const SCENE_LABELS: Record<SceneKind, string> = {
  pair: "Pair — two discs collide",
  wall: "Wall — one disc hits a wall",
  row: "Row — a striker hits a row of resting discs",
  box: "Box — many discs in a walled box",
  snapshot: "Snapshot — discs and walls exported from a game",
  slope: "Slope — one disc or crate released on a ramp (needs friction to hold)",
  stack: "Stack — a tower of discs resting on the floor",
};

const INTEGRATOR_LABELS: Record<string, string> = {
  "symplectic-euler": "Symplectic Euler",
  "velocity-verlet": "Velocity Verlet",
  "explicit-euler": "Explicit Euler (cautionary baseline)",
};

function withTolerances(spec: SweepSpecInput): SweepSpecInput {
  const copy = structuredClone(spec);
  copy.scenario.tolerances ??= { ...SPEC_DEFAULT_TOLERANCES };
  copy.scenario.substeps ??= 1;
  copy.axes ??= [];
  return copy;
}

function unitLabel(unit: string): string {
  return unit === "" ? "no unit" : unit;
}

function stiffnessUnit(model: string): string {
  return model === "hertz" ? "N/m^1.5" : "N/m";
}

function dampingUnit(model: string): string {
  return model === "hertz" ? "N·s/m^1.25" : "N·s/m";
}

/** A sensible first axis for a parameter, centred on the scenario's current value. */
function defaultAxis(parameter: SweepableParameter, scenario: SweepSpecInput["scenario"]): AxisInput {
  if (parameter.kind === "choice") return { parameter: parameter.path, values: parameter.choices.slice(0, 2) };
  // The frame rates games ship at, rather than a decade around the scenario's step.
  if (parameter.path === FRAME_STEP_PATH) return { parameter: parameter.path, values: [1 / 120, 1 / 60, 1 / 30] };
  let base: number | undefined;
  if (parameter.path === "scene.massRatio" && scenario.scene.kind === "pair") base = scenario.scene.massBKg / scenario.scene.massAKg;
  else {
    const value = scenarioValue(scenario as Scenario, parameter.path);
    base = typeof value === "number" ? value : undefined;
  }
  if (parameter.integer) {
    const start = Math.max(1, Math.round(base ?? 1));
    return { parameter: parameter.path, values: [start, start * 2, start * 4].filter((value) => value <= parameter.max) };
  }
  if (base !== undefined && base > 0) {
    if (parameter.suggestedSpacing === "log") return { parameter: parameter.path, spacing: "log", from: base / 10, to: Math.min(base * 10, parameter.max), count: 9 };
    return { parameter: parameter.path, spacing: "linear", from: base / 2, to: Math.min(base * 1.5, parameter.max), count: 5 };
  }
  return { parameter: parameter.path, spacing: "linear", from: 0, to: Math.min(1, parameter.max), count: 5 };
}

function useDebounced<T>(value: T, delayMs: number): T {
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setDebounced(value), delayMs);
    return () => clearTimeout(timer);
  }, [value, delayMs]);
  return debounced;
}

const inputClasses = "block w-full rounded-md border border-line bg-surface px-3 py-2 text-sm text-ink aria-[invalid=true]:border-danger";

function FieldError({ id, message }: { id: string; message?: string }) {
  if (!message) return null;
  return (
    <p id={`${id}-error`} className="text-sm font-medium text-danger" role="alert">
      {message}
    </p>
  );
}

/** The first message at or under a react-hook-form error node, with the words of where it sits ("2nd value: …"). */
function firstNestedMessage(node: unknown, describe: (relative: string) => string, relative = ""): string | undefined {
  if (!node || typeof node !== "object") return undefined;
  const record = node as Record<string, unknown>;
  if (typeof record.message === "string" && record.message) return relative ? `${describe(relative)}: ${record.message}` : record.message;
  for (const [key, child] of Object.entries(record)) {
    if (key === "ref" || key === "type" || key === "types") continue;
    const found = firstNestedMessage(child, describe, relative ? `${relative}.${key}` : key);
    if (found) return found;
  }
  return undefined;
}

/**
 * A frame step typed the way a game programmer says it: "60 Hz", "1/60", "16.7 ms". The stored
 * value stays seconds; a text that does not parse keeps its own message beside the field and makes
 * the spec invalid (NaN) so no quote is given for the old value.
 */
function FrameStepInput({ id, label, seconds, onSeconds, error }: { id: string; label: string; seconds: number | undefined; onSeconds: (seconds: number) => void; error?: string }) {
  const [text, setText] = useState(() => frameStepInputText(seconds));
  const [localError, setLocalError] = useState<string | null>(null);
  const message = localError ?? error;
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium text-ink">
        {label} <span className="font-mono text-xs text-ink-muted">[Hz, s or ms]</span>
      </label>
      <input
        id={id}
        type="text"
        inputMode="decimal"
        autoComplete="off"
        aria-invalid={message ? true : undefined}
        aria-describedby={message ? `${id}-error` : `${id}-hint`}
        className={inputClasses}
        value={text}
        onChange={(event) => {
          setText(event.target.value);
          const parsed = parseFrameStep(event.target.value);
          setLocalError(parsed.ok ? null : parsed.message);
          onSeconds(parsed.ok ? parsed.seconds : Number.NaN);
        }}
      />
      {message ? null : (
        <p id={`${id}-hint`} className="text-xs text-ink-muted" data-testid={`${id}-reading`}>
          {seconds !== undefined && Number.isFinite(seconds) ? `= ${formatFrameStep(seconds)}` : "e.g. 60 Hz, 1/60 s or 16.7 ms"}
        </p>
      )}
      <FieldError id={id} message={message} />
    </div>
  );
}

/**
 * The spec as sent to the quote and submit routes. A scene still holding the discs and walls of the
 * stored snapshot it was opened from is sent by reference (the routes write them back in), so a
 * large snapshot stays within the JSON body limit.
 */
function specForRequest(json: string, snapshot: { id: string; geometry: string } | undefined): unknown {
  const spec = JSON.parse(json) as SweepSpecInput;
  const scene = spec.scenario?.scene;
  if (!snapshot || scene?.kind !== "snapshot" || JSON.stringify([scene.bodies, scene.walls ?? []]) !== snapshot.geometry) return spec;
  const { bodies: _bodies, walls: _walls, ...rest } = scene;
  void _bodies;
  void _walls;
  return { ...spec, scenario: { ...spec.scenario, scene: { ...rest, snapshotId: snapshot.id } } };
}

export function SweepBuilder({
  studioId,
  studioName,
  role,
  initialSpec,
  snapshotId,
  templateId: startTemplateId,
  namePlaceholder,
  suggestionReasoning,
}: {
  /** A template to start from (the studio home's "run a template" links here with ?template=). */
  templateId?: string;
  studioId: string;
  studioName: string;
  role: StudioRole;
  /** A spec to start from instead of the first template (e.g. a stored snapshot's). */
  initialSpec?: SweepSpecInput;
  /** The stored snapshot `initialSpec` was made from: sent by reference while its discs are unchanged. */
  snapshotId?: string;
  /** A suggested name shown as the placeholder of an empty name (duplicate-and-edit: "Copy of …"). */
  namePlaceholder?: string;
  /** Why a snapshot's suggested sweep has its axes (lib/snapshots/suggest.ts), one sentence a line. */
  suggestionReasoning?: string[];
}) {
  const router = useRouter();
  const snapshotRef = useMemo(() => {
    const scene = initialSpec?.scenario.scene;
    return snapshotId && scene?.kind === "snapshot" ? { id: snapshotId, geometry: JSON.stringify([scene.bodies, scene.walls ?? []]) } : undefined;
  }, [initialSpec, snapshotId]);
  const startTemplate = (startTemplateId ? SWEEP_TEMPLATES.find((template) => template.id === startTemplateId) : undefined) ?? SWEEP_TEMPLATES[0];
  const [templateId, setTemplateId] = useState(initialSpec ? "" : startTemplate.id);
  // Bumped on every template switch, so the text fields that keep what was typed start again from the new spec.
  const [generation, setGeneration] = useState(0);
  const form = useForm<SweepSpecInput>({
    // The schema's output type differs from its input (defaults filled in); the form keeps the input shape.
    resolver: zodResolver(sweepSpecSchema) as never,
    // A template's story (or a duplicate's "Copy of …") is only the name's placeholder: the user names the sweep.
    defaultValues: withTolerances(initialSpec && namePlaceholder === undefined ? initialSpec : { ...(initialSpec ?? startTemplate.spec), name: "" }),
    mode: "onChange",
  });
  const { register, setValue, reset, formState, handleSubmit, control } = form;
  // The whole spec as it is typed: it drives the scene-dependent fields, the local checks and the quote.
  const values = useWatch({ control }) as SweepSpecInput;
  const specJson = JSON.stringify(values);
  const debouncedJson = useDebounced(specJson, 400);
  const local = useMemo(() => parseSweepSpec(JSON.parse(specJson)), [specJson]);
  const [confirming, setConfirming] = useState(false);
  const [suggestedName, setSuggestedName] = useState(namePlaceholder ?? (initialSpec ? "" : (startTemplate.spec.name ?? "")));
  const [serverError, setServerError] = useState<ApiClientError | null>(null);

  const quote = useQuery({
    queryKey: ["studio", studioId, "quote", debouncedJson],
    queryFn: async () => (await apiFetch<{ quote: Quote }>(`${studioApiPath(studioId)}/quotes`, { method: "POST", body: { spec: specForRequest(debouncedJson, snapshotRef) } })).quote,
    enabled: local.ok,
    retry: false,
    staleTime: 30_000,
  });

  // Only a quote of exactly the spec on screen may be accepted (the debounce and the request lag behind typing).
  const quoteIsCurrent = local.ok && debouncedJson === specJson && quote.isSuccess && !quote.isFetching;
  // What submit would refuse (a limit, a suspension, the balance) is shown before the click, not as an error after it.
  const refusal = quote.data && quote.data.limits.violations.length > 0 ? quote.data.limits.violations[0].message : null;

  // An unnamed sweep takes the suggestion with the time it was started, so the list never fills with one name.
  const finalName = (values.name ?? "").trim() || (suggestedName ? `${suggestedName} · ${new Date().toISOString().slice(0, 16).replace("T", " ")} UTC`.slice(0, SPEC_LIMITS.maxNameLength) : "");
  const create = useMutation({
    mutationFn: async () =>
      (
        await apiFetch<{ sweep: Sweep }>(sweepsPath(studioId), {
          method: "POST",
          body: { spec: specForRequest(debouncedJson, snapshotRef), name: finalName || undefined, acceptedQuoteMs: quote.data?.ceilingMs },
        })
      ).sweep,
    onSuccess: (sweep) => router.push(`/studios/${studioId}/sweeps/${sweep.id}`),
    onError: (error) => {
      setConfirming(false);
      if (error instanceof ApiClientError) setServerError(error);
    },
  });

  const quoteError = quote.error instanceof ApiClientError ? quote.error : null;
  const apiIssue = (path: string): string | undefined => serverError?.messageFor(path) ?? quoteError?.messageFor(path) ?? quoteError?.messageFor(`spec.${path}`) ?? serverError?.messageFor(`spec.${path}`);
  const axisParameterPaths = (values.axes ?? []).map((axis) => axis.parameter);
  const describe = (path: string) => describeSpecField(path, values.scenario.scene.kind, axisParameterPaths);
  const fieldError = (path: string): string | undefined => {
    const found = get(formState.errors, path) as { message?: string; root?: { message?: string } } | undefined;
    // An error inside a list (axes.1.values.0) shows at the list's field, named in words ("2nd value: …").
    const nested = found?.message || found?.root?.message ? undefined : firstNestedMessage(found, (relative) => describe(`${path}.${relative}`).replace(/^.*?, /, ""));
    return found?.message ?? found?.root?.message ?? nested ?? apiIssue(path);
  };

  const scenario = values.scenario;
  const sceneKind = scenario.scene.kind;
  const axes = values.axes ?? [];
  const sceneParameters = NUMERIC_PARAMETERS.filter((parameter) => parameter.path.startsWith("scene.") && !AXIS_ONLY_PATHS.has(parameter.path) && parameter.scenes !== "all" && parameter.scenes.includes(sceneKind));
  const axisParameters = parametersForScene(sceneKind);

  // Read during render: react-hook-form computes isDirty only for form state read while rendering.
  const isDirty = formState.isDirty;
  const applyTemplate = (id: string) => {
    const template = SWEEP_TEMPLATES.find((candidate) => candidate.id === id);
    if (!template) return;
    // Edits are never thrown away without asking.
    if (isDirty && !window.confirm(`Start from "${template.title}"? Your edits to this spec will be replaced.`)) return;
    setTemplateId(id);
    setGeneration((n) => n + 1);
    setServerError(null);
    setSuggestedName(template.spec.name ?? "");
    reset(withTolerances({ ...template.spec, name: "" }));
  };

  const numberField = (path: string, label: string, unit: string, options: { step?: string; integer?: boolean; optional?: boolean } = {}) => {
    const id = `spec-${path.replaceAll(".", "-")}`;
    const error = fieldError(path);
    return (
      <div className="space-y-1" key={path}>
        <label htmlFor={id} className="block text-sm font-medium text-ink">
          {label} <span className="font-mono text-xs text-ink-muted">[{unitLabel(unit)}]</span>
        </label>
        <input
          id={id}
          type="number"
          step={options.step ?? "any"}
          inputMode="decimal"
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : undefined}
          className={inputClasses}
          {...register(path as FormPath, options.optional ? { setValueAs: (value: unknown) => (value === "" || value === undefined || value === null ? undefined : Number(value)) } : { valueAsNumber: true })}
        />
        <FieldError id={id} message={error} />
      </div>
    );
  };

  const setAxes = (next: AxisInput[]) => setValue("axes", next, { shouldValidate: true, shouldDirty: true });

  const onValid = () => {
    setServerError(null);
    setConfirming(true);
  };

  const allIssues = local.ok ? [] : local.issues;

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <form className="min-w-0 space-y-6" onSubmit={handleSubmit(onValid)} noValidate aria-label="Sweep builder">
          <Card title="Start from a template">
            <fieldset className="grid gap-3 md:grid-cols-3">
              <legend className="sr-only">Template</legend>
              {SWEEP_TEMPLATES.map((template) => (
                <label
                  key={template.id}
                  className={cx("cursor-pointer rounded-md border p-3 text-sm", templateId === template.id ? "border-action bg-surface-muted" : "border-line")}
                >
                  <input type="radio" name="template" value={template.id} checked={templateId === template.id} onChange={() => applyTemplate(template.id)} className="mr-2" />
                  <span className="font-semibold">{template.title}</span>
                  <span className="mt-1 block text-ink-muted">{template.question}</span>
                </label>
              ))}
            </fieldset>
          </Card>

          <Card title="Scenario">
            <div className="grid gap-4 md:grid-cols-2">
              <div className="space-y-1 md:col-span-2">
                <label htmlFor="spec-name" className="block text-sm font-medium text-ink">
                  Sweep name <span className="font-mono text-xs text-ink-muted">[text, at most {SPEC_LIMITS.maxNameLength} characters]</span>
                </label>
                <input id="spec-name" className={inputClasses} placeholder={suggestedName || undefined} {...register("name")} aria-invalid={fieldError("name") ? true : undefined} />
                {!(values.name ?? "").trim() && suggestedName ? <p className="text-xs text-ink-muted">Give it a name your team will recognise; left empty it is named after the suggestion and the time it starts.</p> : null}
                <FieldError id="spec-name" message={fieldError("name")} />
              </div>
              <div className="space-y-1 md:col-span-2">
                <label htmlFor="spec-scene-kind" className="block text-sm font-medium text-ink">
                  Scene
                </label>
                <select
                  id="spec-scene-kind"
                  className={inputClasses}
                  value={sceneKind}
                  onChange={(event) => {
                    const kind = event.target.value as SceneKind;
                    setValue("scenario.scene", structuredClone(SCENE_DEFAULTS[kind]), { shouldValidate: true, shouldDirty: true });
                    setTemplateId("");
                  }}
                >
                  {SCENE_KINDS.map((kind) => (
                    <option key={kind} value={kind}>
                      {SCENE_LABELS[kind]}
                    </option>
                  ))}
                </select>
              </div>
              {scenario.scene.kind === "snapshot" ? (
                <p className="text-sm text-ink-muted md:col-span-2" data-testid="snapshot-scene-summary">
                  {scenario.scene.bodies?.length ?? 0} discs and {scenario.scene.walls?.length ?? 0} walls as exported; upload another snapshot on the Snapshots tab to change them.
                </p>
              ) : null}
              {scenario.scene.kind === "snapshot" && suggestionReasoning && suggestionReasoning.length > 0 ? (
                <details open className="rounded border border-line p-3 text-sm md:col-span-2" data-testid="snapshot-suggestion">
                  <summary className="cursor-pointer font-medium">Why this sweep: placed from the scene&apos;s own masses, sizes and speeds</summary>
                  <ol className="mt-2 list-decimal space-y-1 pl-5 text-ink-muted">
                    {suggestionReasoning.map((line) => (
                      <li key={line}>{line}</li>
                    ))}
                  </ol>
                  <p className="mt-2 text-xs text-ink-muted">An estimate to start from, not a result: the map shows where the verdicts really change. Every field below can be changed.</p>
                </details>
              ) : null}
              {sceneParameters.map((parameter: NumericParameter) =>
                numberField(parameter.path.replace(/^scene\./, "scenario.scene."), parameter.label, parameter.unit, { step: parameter.integer ? "1" : "any", optional: OPTIONAL_SCENE_PATHS.has(parameter.path) }),
              )}
            </div>
          </Card>

          <Card title="Contact and integrator">
            <div className="grid gap-4 md:grid-cols-2">
              <div className="space-y-1">
                <label htmlFor="spec-contact-model" className="block text-sm font-medium text-ink">
                  Contact model
                </label>
                <select
                  id="spec-contact-model"
                  className={inputClasses}
                  value={scenario.contact.model}
                  onChange={(event) => {
                    const model = event.target.value as "linear" | "hertz";
                    setValue("scenario.contact.model", model, { shouldValidate: true });
                    // The linear model takes a stiffness only: a material set for Hertz goes.
                    if (model === "linear" && scenario.contact.material) {
                      setValue("scenario.contact.material", undefined, { shouldValidate: true });
                      setValue("scenario.contact.stiffness", 1e5, { shouldValidate: true });
                    }
                  }}
                >
                  <option value="linear">Linear spring, F = k·δ</option>
                  <option value="hertz">Hertz, F = k·δ^1.5</option>
                </select>
              </div>
              {scenario.contact.model === "hertz" ? (
                <div className="space-y-1">
                  <label htmlFor="spec-hertz-source" className="block text-sm font-medium text-ink">
                    Hertz stiffness from
                  </label>
                  <select
                    id="spec-hertz-source"
                    className={inputClasses}
                    value={scenario.contact.material ? "material" : "stiffness"}
                    onChange={(event) => {
                      if (event.target.value === "material") {
                        setValue("scenario.contact.stiffness", undefined, { shouldValidate: true });
                        // A rigid plastic puck as a starting point (E = 2.4 GPa, ν = 0.37, from memory).
                        setValue("scenario.contact.material", { youngsModulusPa: 2.4e9, poissonRatio: 0.37 }, { shouldValidate: true });
                      } else {
                        setValue("scenario.contact.material", undefined, { shouldValidate: true });
                        setValue("scenario.contact.stiffness", 1e9, { shouldValidate: true });
                      }
                    }}
                  >
                    <option value="stiffness">A stiffness k</option>
                    <option value="material">A material (E, ν)</option>
                  </select>
                </div>
              ) : null}
              {scenario.contact.model === "hertz" && scenario.contact.material ? (
                <>
                  {numberField("scenario.contact.material.youngsModulusPa", "Young's modulus E", "Pa")}
                  {numberField("scenario.contact.material.poissonRatio", "Poisson ratio ν", "")}
                </>
              ) : (
                numberField("scenario.contact.stiffness", "Contact stiffness k", stiffnessUnit(scenario.contact.model))
              )}
              <div className="space-y-1">
                <label htmlFor="spec-damping-kind" className="block text-sm font-medium text-ink">
                  Damping
                </label>
                <select
                  id="spec-damping-kind"
                  className={inputClasses}
                  value={scenario.contact.damping?.kind ?? "none"}
                  onChange={(event) => {
                    const kind = event.target.value;
                    setValue(
                      "scenario.contact.damping",
                      kind === "none" ? { kind: "none" } : kind === "coefficient" ? { kind: "coefficient", value: 1 } : { kind: "restitution", value: 0.8 },
                      { shouldValidate: true },
                    );
                  }}
                >
                  <option value="none">None</option>
                  <option value="coefficient">Dashpot coefficient</option>
                  <option value="restitution">Target restitution</option>
                </select>
              </div>
              {scenario.contact.damping?.kind === "coefficient"
                ? numberField("scenario.contact.damping.value", "Damping coefficient c", dampingUnit(scenario.contact.model))
                : scenario.contact.damping?.kind === "restitution"
                  ? numberField("scenario.contact.damping.value", "Target restitution e", "")
                  : null}
              <div className="space-y-1">
                <label htmlFor="spec-integrator" className="block text-sm font-medium text-ink">
                  Integrator
                </label>
                <select id="spec-integrator" className={inputClasses} {...register("scenario.integrator")}>
                  {CHOICE_PARAMETERS[0].choices.map((choice) => (
                    <option key={choice} value={choice}>
                      {INTEGRATOR_LABELS[choice] ?? choice}
                    </option>
                  ))}
                </select>
              </div>
              <FrameStepInput
                key={`dt-${generation}`}
                id="spec-scenario-dtS"
                label="Frame step dt"
                seconds={scenario.dtS}
                onSeconds={(seconds) => setValue("scenario.dtS", seconds, { shouldValidate: true, shouldDirty: true })}
                error={fieldError("scenario.dtS")}
              />
              {numberField("scenario.substeps", "Substeps per frame", "", { step: "1" })}
              {numberField("scenario.durationS", "Duration", "s")}
            </div>
          </Card>

          <Card title="Tolerances (what counts as stable)">
            <div className="grid gap-4 md:grid-cols-3">
              {numberField("scenario.tolerances.energyDriftRel", "Energy gain allowed", "fraction of initial energy")}
              {numberField("scenario.tolerances.maxOverlapFraction", "Deepest overlap allowed", "fraction of the smaller radius")}
              {numberField("scenario.tolerances.blowUpEnergyFactor", "Blow-up energy factor", "× initial energy")}
            </div>
          </Card>

          <Card
            title={`Axes (${axes.length} of ${SPEC_LIMITS.maxAxes})`}
            actions={
              <Button
                variant="secondary"
                disabled={axes.length >= SPEC_LIMITS.maxAxes}
                onClick={() => {
                  const used = new Set(axes.map((axis) => axis.parameter));
                  const next = axisParameters.find((parameter) => !used.has(parameter.path));
                  if (next) setAxes([...axes, defaultAxis(next, scenario)]);
                }}
              >
                Add axis
              </Button>
            }
          >
            {axes.length === 0 ? <p className="text-sm text-ink-muted">No axes: the sweep is a single cell.</p> : null}
            <div className="space-y-4">
              {axes.map((axis, index) => (
                <AxisEditor
                  key={`${generation}-${index}-${axis.parameter}`}
                  index={index}
                  axis={axis}
                  parameters={axisParameters}
                  scenario={scenario}
                  error={(path) => fieldError(`axes.${index}${path ? `.${path}` : ""}`)}
                  onChange={(next) => setAxes(axes.map((old, i) => (i === index ? next : old)))}
                  onRemove={() => setAxes(axes.filter((_, i) => i !== index))}
                />
              ))}
            </div>
            <FieldError id="spec-axes" message={fieldError("axes")} />
          </Card>

          {allIssues.length > 0 ? (
            <div className="rounded-md border border-danger/50 bg-danger-soft px-4 py-3 text-sm text-danger" data-testid="spec-issues">
              <p className="font-semibold">The spec has {allIssues.length === 1 ? "a problem" : `${allIssues.length} problems`}:</p>
              <ul className="mt-1 list-disc pl-5">
                {allIssues.map((issue) => (
                  <li key={`${issue.field}:${issue.message}`}>
                    <span className="font-semibold">{describe(issue.field)}</span>: {issue.message}
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          {serverError ? <Alert>{serverError.message}</Alert> : null}

          <div className="flex gap-3">
            <Button type="submit" disabled={!quoteIsCurrent || refusal !== null || create.isPending}>
              Review and run
            </Button>
            {local.ok && !quoteIsCurrent ? <span className="self-center text-sm text-ink-muted">Waiting for the quote of this spec…</span> : null}
            {quoteIsCurrent && refusal ? (
              <span className="self-center text-sm text-danger" data-testid="quote-refusal">
                Cannot run: {refusal}
              </span>
            ) : null}
          </div>
        </form>

        <aside className="space-y-4 lg:sticky lg:top-4 lg:self-start">
          <HelpPanel overlays={false} />
          <QuotePanel quote={quote.data} pending={local.ok && (quote.isFetching || debouncedJson !== specJson)} error={local.ok ? (quote.error ? errorMessage(quote.error) : null) : "Fix the spec to get a quote."} />
          {confirming && quoteIsCurrent && quote.data ? (
            <section className="rounded-lg border-2 border-action bg-surface p-5" role="dialog" aria-labelledby="confirm-heading" data-testid="confirm-sweep">
              <h2 id="confirm-heading" className="font-semibold">
                Run this sweep?
              </h2>
              <p className="mt-1 text-sm" data-testid="confirm-name">
                Named “{finalName || "Untitled sweep"}”.
              </p>
              <p className="mt-1 text-sm text-ink-muted">
                {quote.data.cachedCells > 0
                  ? `${quote.data.cells.toLocaleString("en")} cells, ${quote.data.cachedCells.toLocaleString("en")} already computed by earlier sweeps (not billed again), `
                  : ""}
                {quote.data.cachedCells > 0
                  ? `${quote.data.cells.toLocaleString("en")} cells, ${quote.data.cachedCells.toLocaleString("en")} already computed by earlier sweeps (not billed again); `
                  : ""}
                {quote.data.cellsToRun.toLocaleString("en")} cells to run: expected {formatCompute(quote.data.expectedMs)} ({formatPriceCents(quote.data.money.expectedCents)}), at most{" "}
                {formatCompute(quote.data.ceilingMs)} ({formatPriceCents(quote.data.money.ceilingCents)}). The ceiling is reserved now; the sweep is billed the work its cells do, never more than the ceiling.
              </p>
              <div className="mt-3 flex gap-2">
                <Button onClick={() => create.mutate()} disabled={create.isPending}>
                  {create.isPending ? "Starting…" : "Run sweep"}
                </Button>
                <Button variant="ghost" onClick={() => setConfirming(false)}>
                  Back to the spec
                </Button>
              </div>
            </section>
          ) : null}
        </aside>
      </div>
    </StudioShell>
  );
}

function formatTenthsOfCent(tenths: number): string {
  return `${(tenths / 10).toFixed(tenths % 10 === 0 ? 0 : 1)}¢`;
}

function QuotePanel({ quote, pending, error }: { quote: Quote | undefined; pending: boolean; error: string | null }) {
  const rows: [string, string][] = quote
    ? [
        ["Cells", quote.cells.toLocaleString("en")],
        ["Cached cells (not billed)", quote.cachedCells.toLocaleString("en")],
        ["Cells to run", quote.cellsToRun.toLocaleString("en")],
        ["Integrator steps", quote.steps.toLocaleString("en")],
        ["Ceiling (most it can cost)", `${formatCompute(quote.ceilingMs)} · ${formatPriceCents(quote.money.ceilingCents)}`],
        ["Ceiling in ms", `${quote.ceilingMs.toLocaleString("en")} ms`],
        ["Expected", `${formatCompute(quote.expectedMs)} · ${formatPriceCents(quote.money.expectedCents)}`],
        ["Expected in ms", `${quote.expectedMs.toLocaleString("en")} ms`],
        ["Ceiling from prepaid minutes", `${formatCompute(quote.money.ceilingPrepaidMs)} at ${formatTenthsOfCent(quote.money.prepaidTenthsOfCentPerMinute)}/min (${quote.money.prepaidPriceSource === "purchases" ? "your packs' average" : "smallest pack's list price"})`],
        ...(quote.money.ceilingOverageMs > 0 ? ([["Ceiling past the balance (overage)", `${formatCompute(quote.money.ceilingOverageMs)} at ${formatTenthsOfCent(quote.money.overageTenthsOfCentPerMinute)}/min`]] as [string, string][]) : []),
        ["Balance now", formatCompute(quote.balanceMs)],
        ["Balance after (expected)", formatCompute(quote.balanceAfterMs)],
        ["Limit: cells per sweep", quote.limits.maxCells.toLocaleString("en")],
        ["Limit: steps per cell", quote.limits.maxStepsPerCell.toLocaleString("en")],
        ["Limit: bodies per scene", quote.limits.maxBodies.toLocaleString("en")],
        ["Limit: compute this month", `${formatMinutes(quote.limits.monthUsedMs)} used of ${formatMinutes(quote.limits.monthlyComputeMs)}`],
        ["Compute left this month", formatMinutes(quote.limits.monthRemainingMs)],
        ["Limit: sweeps at once", `${quote.limits.runningSweeps} running of ${quote.limits.maxRunningSweeps} (more wait in the queue)`],
      ]
    : [];
  return (
    <Card title="Quote">
      <div aria-live="polite" data-testid="quote-panel">
        {error && !quote ? <p className="text-sm text-danger">{error}</p> : null}
        {quote ? (
          <dl className={cx("grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm", pending && "opacity-60")}>
            {rows.map(([label, value]) => (
              <div key={label} className="contents">
                <dt className="text-ink-muted">{label}</dt>
                <dd className="text-right font-mono" data-testid={`quote-${label.toLowerCase().replace(/[^a-z]+/g, "-")}`}>
                  {value}
                </dd>
              </div>
            ))}
          </dl>
        ) : !error ? (
          <p className="text-sm text-ink-muted">Asking for a quote…</p>
        ) : null}
        {quote && error ? <p className="mt-2 text-sm text-danger">{error}</p> : null}
        {quote?.warnings.map((warning) => (
          <p key={warning} className="mt-2 text-sm text-ink">
            {warning}
          </p>
        ))}
        <p className="mt-3 text-xs text-ink-muted">
          Compute is billed in milliseconds from the work units the engine counts for each cell ({WORK_UNITS_PER_BILLED_MS.toLocaleString("en")} units a millisecond): the same sweep always costs the same, and never more than its ceiling. Cached cells cost nothing. Prices are before tax.
        </p>
      </div>
    </Card>
  );
}

function AxisEditor({
  index,
  axis,
  parameters,
  scenario,
  error,
  onChange,
  onRemove,
}: {
  index: number;
  axis: AxisInput;
  parameters: SweepableParameter[];
  scenario: SweepSpecInput["scenario"];
  error: (path: string) => string | undefined;
  onChange: (axis: AxisInput) => void;
  onRemove: () => void;
}) {
  const parameter = parameters.find((candidate) => candidate.path === axis.parameter);
  const idBase = `axis-${index}`;
  const isList = axis.values !== undefined;
  const isFrameStep = axis.parameter === FRAME_STEP_PATH;
  const [listText, setListText] = useState(() => (isFrameStep ? frameStepListText((axis.values ?? []) as number[]) : (axis.values ?? []).join(", ")));
  // What is wrong with the typed list, when it does not parse (the spec then holds NaN there).
  const [localErrors, setLocalErrors] = useState<{ values?: string }>({});
  const unit = parameter?.kind === "number" ? (parameter.path === "contact.stiffness" ? stiffnessUnit(scenario.contact.model) : parameter.path === "contact.damping.coefficient" ? dampingUnit(scenario.contact.model) : parameter.unit) : "";

  const rangeInput = (key: "from" | "to" | "count", label: string, fieldUnit: string) => {
    const id = `${idBase}-${key}`;
    if (isFrameStep && key !== "count") {
      return (
        <FrameStepInput
          id={id}
          label={label}
          seconds={axis[key]}
          error={error(key)}
          onSeconds={(seconds) => onChange({ ...axis, [key]: seconds })}
        />
      );
    }
    const message = error(key);
    return (
      <div className="space-y-1">
        <label htmlFor={id} className="block text-sm font-medium text-ink">
          {label} <span className="font-mono text-xs text-ink-muted">[{unitLabel(fieldUnit)}]</span>
        </label>
        <input
          id={id}
          type="number"
          step={key === "count" ? "1" : "any"}
          className={inputClasses}
          aria-invalid={message ? true : undefined}
          aria-describedby={message ? `${id}-error` : undefined}
          value={Number.isFinite(axis[key]) ? String(axis[key]) : ""}
          onChange={(event) => onChange({ ...axis, [key]: event.target.value === "" ? Number.NaN : Number(event.target.value) })}
        />
        <FieldError id={id} message={message} />
      </div>
    );
  };

  return (
    <fieldset className="rounded-md border border-line p-4" data-testid={`axis-${index}`}>
      <legend className="px-1 text-sm font-semibold">Axis {index + 1}</legend>
      <div className="grid gap-3 md:grid-cols-4">
        <div className="space-y-1 md:col-span-2">
          <label htmlFor={`${idBase}-parameter`} className="block text-sm font-medium text-ink">
            Parameter
          </label>
          <select
            id={`${idBase}-parameter`}
            className={inputClasses}
            value={axis.parameter}
            onChange={(event) => {
              const next = parameters.find((candidate) => candidate.path === event.target.value);
              if (next) onChange(defaultAxis(next, scenario));
            }}
          >
            {parameter ? null : <option value={axis.parameter}>{axis.parameter} (not for this scene)</option>}
            {parameters.map((candidate) => (
              <option key={candidate.path} value={candidate.path}>
                {candidate.label}
                {candidate.kind === "number" ? ` [${unitLabel(candidate.path === "contact.stiffness" ? stiffnessUnit(scenario.contact.model) : candidate.unit)}]` : " [choices]"}
              </option>
            ))}
          </select>
          <FieldError id={`${idBase}-parameter`} message={error("parameter")} />
        </div>
        {parameter?.kind === "number" ? (
          <div className="space-y-1">
            <label htmlFor={`${idBase}-form`} className="block text-sm font-medium text-ink">
              Values
            </label>
            <select
              id={`${idBase}-form`}
              className={inputClasses}
              value={isList ? "list" : (axis.spacing ?? "linear")}
              onChange={(event) => {
                const choice = event.target.value;
                if (choice === "list") {
                  const start = defaultAxis(parameter, scenario);
                  const values = start.values ?? [start.from as number, start.to as number];
                  setListText(isFrameStep ? frameStepListText(values as number[]) : values.join(", "));
                  onChange({ parameter: axis.parameter, values });
                } else if (isList) {
                  const start = defaultAxis({ ...parameter, integer: false, suggestedSpacing: choice as "linear" | "log" }, scenario);
                  onChange({ ...start, spacing: choice as "linear" | "log" });
                } else onChange({ ...axis, spacing: choice as "linear" | "log" });
              }}
            >
              <option value="linear">Linear range</option>
              <option value="log">Log range</option>
              <option value="list">List of values</option>
            </select>
          </div>
        ) : null}
        <div className="flex items-end justify-end">
          <Button variant="ghost" onClick={onRemove} aria-label={`Remove axis ${index + 1}`}>
            Remove
          </Button>
        </div>
      </div>
      {parameter?.help ? <p className="mt-2 text-xs text-ink-muted">{parameter.help}</p> : null}
      <div className="mt-3 grid gap-3 md:grid-cols-3">
        {parameter?.kind === "choice" ? (
          <fieldset className="md:col-span-3">
            <legend className="text-sm font-medium">Choices</legend>
            <div className="mt-1 flex flex-wrap gap-4">
              {parameter.choices.map((choice) => {
                const checked = (axis.values ?? []).includes(choice);
                return (
                  <label key={choice} className="flex items-center gap-2 text-sm">
                    <input
                      type="checkbox"
                      checked={checked}
                      onChange={() => {
                        const current = (axis.values ?? []) as string[];
                        const next = checked ? current.filter((value) => value !== choice) : parameter.choices.filter((candidate) => candidate === choice || current.includes(candidate));
                        onChange({ parameter: axis.parameter, values: next });
                      }}
                    />
                    {INTEGRATOR_LABELS[choice] ?? choice}
                  </label>
                );
              })}
            </div>
          </fieldset>
        ) : isList ? (
          <div className="space-y-1 md:col-span-3">
            <label htmlFor={`${idBase}-values`} className="block text-sm font-medium text-ink">
              Values, comma-separated <span className="font-mono text-xs text-ink-muted">[{isFrameStep ? "Hz, s or ms — e.g. 30, 60, 120 Hz or 1/120, 1/60, 1/30" : unitLabel(unit)}]</span>
            </label>
            <input
              id={`${idBase}-values`}
              className={inputClasses}
              value={listText}
              aria-invalid={localErrors.values ?? error("values") ? true : undefined}
              aria-describedby={localErrors.values ?? error("values") ? `${idBase}-values-error` : undefined}
              onChange={(event) => {
                setListText(event.target.value);
                if (isFrameStep) {
                  const parsed = parseFrameStepList(event.target.value);
                  setLocalErrors((old) => ({ ...old, values: parsed.ok ? undefined : parsed.message }));
                  onChange({ parameter: axis.parameter, values: parsed.ok ? parsed.seconds : [Number.NaN] });
                  return;
                }
                const parts = event.target.value
                  .split(",")
                  .map((part) => part.trim())
                  .filter((part) => part !== "");
                const bad = parts.findIndex((part) => !Number.isFinite(Number(part)));
                setLocalErrors((old) => ({ ...old, values: bad >= 0 ? `${ordinal(bad + 1)} value "${parts[bad]}" is not a number` : undefined }));
                onChange({ parameter: axis.parameter, values: parts.map(Number) });
              }}
            />
            {isFrameStep && !localErrors.values && !error("values") && axis.values?.length ? (
              <p className="text-xs text-ink-muted" data-testid={`${idBase}-values-reading`}>
                = {(axis.values as number[]).map((value) => formatFrameStep(value)).join("; ")}
              </p>
            ) : null}
            <FieldError id={`${idBase}-values`} message={localErrors.values ?? error("values")} />
          </div>
        ) : parameter ? (
          <>
            {rangeInput("from", "From", unit)}
            {rangeInput("to", "To", unit)}
            {rangeInput("count", "Count", "values")}
          </>
        ) : null}
      </div>
      <FieldError id={idBase} message={error("")} />
    </fieldset>
  );
}
