"use client";

import { useState } from "react";
import { TextField } from "@/components/ui";
import { FRAME_STEP_INPUT_UNITS, formatFrameStep, frameStepInputText, parseFrameStep } from "@/lib/ui/units";

/**
 * A frame step typed the way a game programmer says it: "60 Hz", "1/60", "16.7 ms". The stored
 * value stays seconds; a text that does not parse keeps its own message beside the field and makes
 * the spec invalid (NaN) so no quote is given for the old value.
 */
export function FrameStepInput({ id, label, seconds, onSeconds, error }: { id: string; label: string; seconds: number | undefined; onSeconds: (seconds: number) => void; error?: string }) {
  const [text, setText] = useState(() => frameStepInputText(seconds));
  const [localError, setLocalError] = useState<string | null>(null);
  const message = localError ?? error;
  return (
    <TextField
      id={id}
      label={label}
      unit={FRAME_STEP_INPUT_UNITS}
      type="text"
      inputMode="decimal"
      autoComplete="off"
      value={text}
      onChange={(event) => {
        setText(event.target.value);
        const parsed = parseFrameStep(event.target.value);
        setLocalError(parsed.ok ? null : parsed.message);
        onSeconds(parsed.ok ? parsed.seconds : Number.NaN);
      }}
      // While the text does not parse, the message replaces the reading of the step.
      hint={message ? undefined : seconds !== undefined && Number.isFinite(seconds) ? `= ${formatFrameStep(seconds)}` : "e.g. 60 Hz, 1/60 s or 16.7 ms"}
      hintTestId={`${id}-reading`}
      error={message}
    />
  );
}
