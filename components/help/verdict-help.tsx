/**
 * Help where the numbers are read: what each verdict and overlay means, in two lines each, and what
 * the results are for. The verdicts come from the engine's list (lib/physics/types.ts), so a
 * verdict added there shows here with its map label even before it has its own words.
 */
import { SAFETY_CAUTION } from "@/components/site-footer";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import { VERDICTS } from "@/lib/physics/types";

const VERDICT_TEXT: Record<string, [string, string]> = {
  stable: ["Energy stayed within tolerance and the overlap stayed shallow.", "Safe to use, with the margin you choose on the envelope."],
  "energy-drift": ["The contact gained or lost energy it should not have.", "Bounces grow or die too soon: lower the stiffness or the frame step."],
  "deep-overlap": ["The bodies sank further into each other than your tolerance allows.", "Raise the stiffness or add substeps; players see objects sink."],
  tunneled: ["A body passed through the other between two steps without a contact.", "Shorten the frame step or slow the object: v·dt must stay under its thickness."],
  exploded: ["The step diverged: energy grew past the blow-up factor.", "The stiffness is past ω·dt = 2 for this integrator: soften it or step faster."],
};

export const OVERLAY_TEXT: readonly { name: string; lines: [string, string] }[] = [
  { name: "ω·dt = 2 (stability bound)", lines: ["Where a linear spring's natural frequency times the step reaches 2.", "Explicit integrators explode to the stiff, coarse side of this line."] },
  { name: "steps per contact", lines: ["How many integrator steps a contact lasts at that stiffness and step.", "Under about 8, bounces lose accuracy (common practice)."] },
  { name: "v·dt per step (tunnelling)", lines: ["Where one step carries a body as far as its contact thickness.", "Past this line fast objects can skip the contact entirely."] },
];

export function ResultsCaution() {
  return (
    <p className="text-sm text-ink-muted" data-testid="results-caution">
      {SAFETY_CAUTION} Results come from fixed-step integration of simplified contact models; use them to choose game settings, not to certify anything physical.
    </p>
  );
}

export function VerdictGlossary({ compact = false }: { compact?: boolean }) {
  return (
    <dl className={compact ? "space-y-2 text-sm" : "grid gap-3 text-sm sm:grid-cols-2"} data-testid="verdict-glossary">
      {VERDICTS.map((verdict) => {
        const style = VERDICT_STYLES[verdict];
        const [first, second] = VERDICT_TEXT[verdict] ?? [`Cells the engine marks ${style?.label ?? verdict}.`, "See the cell's reason for what the engine measured."];
        return (
          <div key={verdict} className="flex gap-2">
            <span aria-hidden="true" className="mt-1 h-3 w-3 shrink-0 rounded-sm border border-line" style={{ background: style?.colour }} />
            <div>
              <dt className="font-semibold">{style?.label ?? verdict}</dt>
              <dd className="text-ink-muted">
                {first}
                <br />
                {second}
              </dd>
            </div>
          </div>
        );
      })}
    </dl>
  );
}

/** The help panel of the builder and the map: verdicts, overlays and the caution, folded away until asked for. */
export function HelpPanel({ overlays = true, open = false }: { overlays?: boolean; open?: boolean }) {
  return (
    <details className="rounded-lg border border-line bg-surface p-4 text-sm" open={open} data-testid="help-panel">
      <summary className="cursor-pointer font-semibold">What the verdicts{overlays ? " and lines" : ""} mean</summary>
      <div className="mt-3 space-y-4">
        <VerdictGlossary compact />
        {overlays ? (
          <dl className="space-y-2">
            {OVERLAY_TEXT.map((overlay) => (
              <div key={overlay.name}>
                <dt className="font-semibold">{overlay.name}</dt>
                <dd className="text-ink-muted">
                  {overlay.lines[0]}
                  <br />
                  {overlay.lines[1]}
                </dd>
              </div>
            ))}
          </dl>
        ) : null}
        <ResultsCaution />
      </div>
    </details>
  );
}
