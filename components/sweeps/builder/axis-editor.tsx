"use client";

import { useState } from "react";
import { Button, CheckboxGroup, FieldError, SelectField, TextField } from "@/components/ui";
import type { SweepableParameter } from "@/lib/sweeps/parameters";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { FRAME_STEP_INPUT_UNITS, FRAME_STEP_PATH, formatFrameStep, frameStepListText, inputUnitLabel, ordinal, parseFrameStepList } from "@/lib/ui/units";
import { INTEGRATOR_LABELS, defaultAxis, type AxisInput } from "./defaults";
import { FrameStepInput } from "./frame-step-input";

/** One axis of the sweep: its parameter, and its values as a range (linear or log) or a list, or the choices it compares. */
export function AxisEditor({
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
  const model = scenario.contact.model;
  const unit = parameter?.kind === "number" ? inputUnitLabel(parameter.path, parameter.unit, model) : "";

  const rangeInput = (key: "from" | "to" | "count", label: string) => {
    const id = `${idBase}-${key}`;
    if (isFrameStep && key !== "count") return <FrameStepInput id={id} label={label} seconds={axis[key]} error={error(key)} onSeconds={(seconds) => onChange({ ...axis, [key]: seconds })} />;
    return (
      <TextField
        id={id}
        label={label}
        unit={key === "count" ? "values" : unit}
        type="number"
        step={key === "count" ? "1" : "any"}
        value={Number.isFinite(axis[key]) ? String(axis[key]) : ""}
        onChange={(event) => onChange({ ...axis, [key]: event.target.value === "" ? Number.NaN : Number(event.target.value) })}
        error={error(key)}
      />
    );
  };

  const readList = (text: string) => {
    setListText(text);
    if (isFrameStep) {
      const parsed = parseFrameStepList(text);
      setLocalErrors((old) => ({ ...old, values: parsed.ok ? undefined : parsed.message }));
      onChange({ parameter: axis.parameter, values: parsed.ok ? parsed.seconds : [Number.NaN] });
      return;
    }
    const parts = text
      .split(",")
      .map((part) => part.trim())
      .filter((part) => part !== "");
    const bad = parts.findIndex((part) => !Number.isFinite(Number(part)));
    setLocalErrors((old) => ({ ...old, values: bad >= 0 ? `${ordinal(bad + 1)} value "${parts[bad]}" is not a number` : undefined }));
    onChange({ parameter: axis.parameter, values: parts.map(Number) });
  };
  const listError = localErrors.values ?? error("values");

  return (
    <fieldset className="rounded-md border border-line p-4" data-testid={`axis-${index}`}>
      <legend className="px-1 text-sm font-semibold">Axis {index + 1}</legend>
      <div className="grid gap-3 md:grid-cols-4">
        <div className="md:col-span-2">
          <SelectField
            id={`${idBase}-parameter`}
            label="Parameter"
            value={axis.parameter}
            onChange={(event) => {
              const next = parameters.find((candidate) => candidate.path === event.target.value);
              if (next) onChange(defaultAxis(next, scenario));
            }}
            error={error("parameter")}
          >
            {parameter ? null : <option value={axis.parameter}>{axis.parameter} (not for this scene)</option>}
            {parameters.map((candidate) => (
              <option key={candidate.path} value={candidate.path}>
                {candidate.label}
                {candidate.kind === "number" ? ` [${inputUnitLabel(candidate.path, candidate.unit, model)}]` : " [choices]"}
              </option>
            ))}
          </SelectField>
        </div>
        {parameter?.kind === "number" ? (
          <SelectField
            id={`${idBase}-form`}
            label="Values"
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
          </SelectField>
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
          <CheckboxGroup
            id={`${idBase}-choices`}
            legend="Choices"
            inline
            className="md:col-span-3"
            options={parameter.choices.map((choice) => ({ value: choice, label: INTEGRATOR_LABELS[choice] ?? choice }))}
            selected={(axis.values ?? []) as string[]}
            onChange={(values) => onChange({ parameter: axis.parameter, values })}
          />
        ) : isList ? (
          <div className="md:col-span-3">
            <TextField
              id={`${idBase}-values`}
              label="Values, comma-separated"
              unit={isFrameStep ? `${FRAME_STEP_INPUT_UNITS} — e.g. 30, 60, 120 Hz or 1/120, 1/60, 1/30` : unit}
              value={listText}
              onChange={(event) => readList(event.target.value)}
              hint={isFrameStep && !listError && axis.values?.length ? `= ${(axis.values as number[]).map((value) => formatFrameStep(value)).join("; ")}` : undefined}
              hintTestId={`${idBase}-values-reading`}
              error={listError}
            />
          </div>
        ) : parameter ? (
          <>
            {rangeInput("from", "From")}
            {rangeInput("to", "To")}
            {rangeInput("count", "Count")}
          </>
        ) : null}
      </div>
      <FieldError id={idBase} message={error("")} />
    </fieldset>
  );
}
