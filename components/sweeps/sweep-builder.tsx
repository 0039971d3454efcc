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
import { Alert, Button, Card, FieldError, SelectField, TextField, cx } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { HelpPanel } from "@/components/help/verdict-help";
import type { SceneKind } from "@/lib/physics/types";
import { AXIS_ONLY_PATHS, CHOICE_PARAMETERS, NUMERIC_PARAMETERS, SCENE_KINDS, SPEC_LIMITS, parametersForScene, type NumericParameter } from "@/lib/sweeps/parameters";
import { OPTIONAL_SCENE_PATHS, parseSweepSpec, sweepSpecSchema, type SweepSpecInput } from "@/lib/sweeps/spec";
import { SWEEP_TEMPLATES } from "@/lib/sweeps/templates";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { studioApiPath } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";
import { describeSpecField } from "@/lib/ui/spec-fields";
import { contactUnit, unitLabel } from "@/lib/ui/units";
import { AxisEditor } from "./builder/axis-editor";
import { ConfirmRun } from "./builder/confirm-run";
import { INTEGRATOR_LABELS, SCENE_DEFAULTS, SCENE_LABELS, defaultAxis, withTolerances, type AxisInput } from "./builder/defaults";
import { FrameStepInput } from "./builder/frame-step-input";
import { QuotePanel } from "./builder/quote-panel";
import { firstNestedMessage, specForRequest } from "./builder/spec-request";
import { sweepsPath, type Quote, type Sweep } from "./sweep-api";

type FormPath = FieldPath<SweepSpecInput>;

function useDebounced<T>(value: T, delayMs: number): T {
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setDebounced(value), delayMs);
    return () => clearTimeout(timer);
  }, [value, delayMs]);
  return debounced;
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

  /** A number of the spec, registered with the form, its unit beside its label. */
  const numberField = (path: string, label: string, unit: string, options: { step?: string; optional?: boolean } = {}) => (
    <TextField
      key={path}
      id={`spec-${path.replaceAll(".", "-")}`}
      label={label}
      unit={unitLabel(unit)}
      type="number"
      step={options.step ?? "any"}
      inputMode="decimal"
      error={fieldError(path)}
      {...register(path as FormPath, options.optional ? { setValueAs: (value: unknown) => (value === "" || value === undefined || value === null ? undefined : Number(value)) } : { valueAsNumber: true })}
    />
  );
  /** A number of the scenario whose unit follows the contact model (stiffness, damping coefficient). */
  const contactNumberField = (path: string, parameterPath: string, label: string) => numberField(path, label, contactUnit(parameterPath, "", scenario.contact.model));

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
              <div className="md:col-span-2">
                <TextField
                  id="spec-name"
                  label="Sweep name"
                  unit={`text, at most ${SPEC_LIMITS.maxNameLength} characters`}
                  placeholder={suggestedName || undefined}
                  hint={!(values.name ?? "").trim() && suggestedName ? "Give it a name your team will recognise; left empty it is named after the suggestion and the time it starts." : undefined}
                  error={fieldError("name")}
                  {...register("name")}
                />
              </div>
              <div className="md:col-span-2">
                <SelectField
                  id="spec-scene-kind"
                  label="Scene"
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
                </SelectField>
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
              <SelectField
                id="spec-contact-model"
                label="Contact model"
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
              </SelectField>
              {scenario.contact.model === "hertz" ? (
                <SelectField
                  id="spec-hertz-source"
                  label="Hertz stiffness from"
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
                </SelectField>
              ) : null}
              {scenario.contact.model === "hertz" && scenario.contact.material ? (
                <>
                  {numberField("scenario.contact.material.youngsModulusPa", "Young's modulus E", "Pa")}
                  {numberField("scenario.contact.material.poissonRatio", "Poisson ratio ν", "")}
                </>
              ) : (
                contactNumberField("scenario.contact.stiffness", "contact.stiffness", "Contact stiffness k")
              )}
              <SelectField
                id="spec-damping-kind"
                label="Damping"
                value={scenario.contact.damping?.kind ?? "none"}
                onChange={(event) => {
                  const kind = event.target.value;
                  setValue("scenario.contact.damping", kind === "none" ? { kind: "none" } : kind === "coefficient" ? { kind: "coefficient", value: 1 } : { kind: "restitution", value: 0.8 }, { shouldValidate: true });
                }}
              >
                <option value="none">None</option>
                <option value="coefficient">Dashpot coefficient</option>
                <option value="restitution">Target restitution</option>
              </SelectField>
              {scenario.contact.damping?.kind === "coefficient"
                ? contactNumberField("scenario.contact.damping.value", "contact.damping.coefficient", "Damping coefficient c")
                : scenario.contact.damping?.kind === "restitution"
                  ? numberField("scenario.contact.damping.value", "Target restitution e", "")
                  : null}
              <SelectField id="spec-integrator" label="Integrator" {...register("scenario.integrator")}>
                {CHOICE_PARAMETERS[0].choices.map((choice) => (
                  <option key={choice} value={choice}>
                    {INTEGRATOR_LABELS[choice] ?? choice}
                  </option>
                ))}
              </SelectField>
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
          {confirming && quoteIsCurrent && quote.data ? <ConfirmRun quote={quote.data} name={finalName} busy={create.isPending} onRun={() => create.mutate()} onBack={() => setConfirming(false)} /> : null}
        </aside>
      </div>
    </StudioShell>
  );
}
