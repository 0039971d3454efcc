import type { Metadata } from "next";
import { SAFETY_CAUTION, TAX_NOTE } from "@/components/site-footer";
import { StabilityMapIllustration } from "@/components/stability-map-illustration";
import { ButtonLink } from "@/components/ui";
import { METERING_NOTE } from "@/lib/sweeps/metering-rate";
import { CREDIT_PACKS, centsPerMinute, formatPriceCents } from "@/lib/billing/packs";

export const metadata: Metadata = { title: { absolute: "Kickdrift — stability maps for game collision physics" } };

const AXES = [
  { name: "Stiffness", unit: "N/m", why: "Stiffer penalty springs leave less overlap but raise the contact frequency ω = √(k/m)." },
  { name: "Timestep", unit: "s", why: "The step your game runs at: 1/30, 1/60, 1/120 … and whatever your worst frame drops to." },
  { name: "Mass ratio", unit: "m₁ / m₂", why: "A light body on a heavy one: the lighter side sets the frequency the integrator must follow." },
  { name: "Impact speed", unit: "m/s", why: "Fast bodies sink deep in one step, or pass a thin collider entirely when speed × dt exceeds its thickness." },
  { name: "Restitution", unit: "—", why: "How much bounce you asked for against how much energy the integrator adds or removes." },
  { name: "Integrator", unit: "choice", why: "Symplectic Euler or velocity Verlet, compared cell by cell on the same grid." },
];

const VERDICTS = [
  { name: "stable", colour: "var(--kd-verdict-stable)", text: "Energy, rebound and overlap stay within tolerance, and every contact is resolved in enough steps." },
  { name: "coarse-contact", colour: "var(--kd-verdict-coarse)", text: "A contact took too few steps, or its energy spiked inside it: the result hangs on luck." },
  { name: "energy-drift", colour: "var(--kd-verdict-drift)", text: "The scene as a whole gained energy over the run (or lost it with no damping to explain it)." },
  { name: "restitution-off", colour: "var(--kd-verdict-restitution)", text: "A bounce came out livelier or deader than the restitution you asked for." },
  { name: "deep-overlap", colour: "var(--kd-verdict-overlap)", text: "Bodies sink further into each other than your tolerance allows." },
  { name: "tunneled", colour: "var(--kd-verdict-tunneled)", text: "A body passed through the collider between two steps." },
  { name: "step-unstable", colour: "var(--kd-verdict-step)", text: "The step is past what the contact's stiffness allows (ω·h ≥ 2), or a contact threw bodies apart far faster than they came." },
  { name: "exploded", colour: "var(--kd-verdict-exploded)", text: "The run blew up: energy grew a thousand-fold or became non-finite." },
];

const STEPS = [
  { title: "Describe the contact", text: "Pick a scene (a puck on a rink wall, a crate on a ramp), its bodies, the contact model and the integrator." },
  { title: "Choose the axes", text: "Sweep any parameters over linear or log ranges. The quote shows cells, compute minutes and cost before anything runs." },
  { title: "Read the map", text: "Cells fill in as chunks finish. Open any cell for its time series and a replay of its trajectory." },
  { title: "Ship the envelope", text: "Export the safe envelope — the parameters that stay stable with margin — straight into your game's config." },
];

export default function LandingPage() {
  return (
    <div className="space-y-24">
      <section className="grid items-center gap-10 pt-4 lg:grid-cols-[1.05fr_1fr]">
        <div className="space-y-6">
          <p className="font-mono text-xs uppercase tracking-[0.2em] text-kick">Collision parameter sweeps, run for you</p>
          <h1 className="text-4xl font-bold leading-[1.08] tracking-tight sm:text-5xl">
            Know where your contacts explode before your players do.
          </h1>
          <p className="max-w-xl text-lg text-ink-muted">
            Kickdrift runs grids of your game&apos;s contact parameters — stiffness × timestep × mass ratio × speed — on our compute and draws
            stability maps that show which integrator fails where, and why.
          </p>
          <div className="flex flex-wrap gap-3">
            <ButtonLink href="/signup">Create a studio account</ButtonLink>
            <ButtonLink href="/#pricing" variant="secondary">
              See credit packs
            </ButtonLink>
          </div>
          <p className="text-sm text-ink-muted">{SAFETY_CAUTION}</p>
        </div>
        <StabilityMapIllustration />
      </section>

      <section aria-labelledby="axes-heading" className="space-y-8">
        <div className="max-w-2xl space-y-3">
          <h2 id="axes-heading" className="text-2xl font-bold tracking-tight">
            For the programmer who owns the physics
          </h2>
          <p className="text-ink-muted">
            Contacts in most games are stiff penalty springs advanced by a fixed-step integrator. Every knob trades against another: raise the
            stiffness and the stable timestep shrinks; drop a frame and a puck that was fine at 1/120 s goes through the wall. A sweep tests the
            whole grid instead of the one value you tried last.
          </p>
        </div>
        <ul className="grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
          {AXES.map((axis) => (
            <li key={axis.name} className="rounded-lg border border-line bg-surface p-5">
              <div className="flex items-baseline justify-between gap-2">
                <h3 className="font-semibold">{axis.name}</h3>
                <span className="font-mono text-xs text-ink-muted">{axis.unit}</span>
              </div>
              <p className="mt-2 text-sm text-ink-muted">{axis.why}</p>
            </li>
          ))}
        </ul>
      </section>

      <section aria-labelledby="why-heading" className="grid gap-10 lg:grid-cols-2">
        <div className="space-y-4">
          <h2 id="why-heading" className="text-2xl font-bold tracking-tight">
            Which integrator fails where — and why
          </h2>
          <p className="text-ink-muted">
            Symplectic Euler and velocity Verlet both keep a linear spring bounded while ω·dt stays under 2; past that line the step amplifies
            every oscillation and the contact explodes. Near the line they stay bounded but swing energy in and out, which players see as jitter or
            dead bounces. Velocity Verlet is second order, so at the same step its energy error is usually the smaller of the two.
          </p>
          <p className="text-ink-muted">
            Speed adds a separate failure: when a body moves further in one step than the collider is thick, no spring ever engages and it
            tunnels. Kickdrift gives every cell one verdict so the map reads at a glance.
          </p>
        </div>
        <ul className="space-y-3" aria-label="Verdicts">
          {VERDICTS.map((verdict) => (
            <li key={verdict.name} className="flex gap-3 rounded-lg border border-line bg-surface p-4">
              <span aria-hidden="true" className="mt-1 h-3 w-3 shrink-0 rounded-sm" style={{ background: verdict.colour }} />
              <div>
                <p className="font-mono text-sm font-semibold">{verdict.name}</p>
                <p className="text-sm text-ink-muted">{verdict.text}</p>
              </div>
            </li>
          ))}
        </ul>
      </section>

      <section aria-labelledby="steps-heading" className="space-y-8">
        <h2 id="steps-heading" className="text-2xl font-bold tracking-tight">
          From scenario to safe envelope
        </h2>
        <ol className="grid gap-4 md:grid-cols-4">
          {STEPS.map((step, index) => (
            <li key={step.title} className="rounded-lg border border-line bg-surface p-5">
              <span className="font-mono text-xs text-kick">{String(index + 1).padStart(2, "0")}</span>
              <h3 className="mt-2 font-semibold">{step.title}</h3>
              <p className="mt-2 text-sm text-ink-muted">{step.text}</p>
            </li>
          ))}
        </ol>
      </section>

      <section id="pricing" aria-labelledby="pricing-heading" className="scroll-mt-24 space-y-8">
        <div className="max-w-2xl space-y-3">
          <h2 id="pricing-heading" className="text-2xl font-bold tracking-tight">
            Credit packs
          </h2>
          <p className="text-ink-muted">
            Buy compute minutes in packs; sweeps draw them down by the millisecond. Every quote shows, before a sweep runs, its ceiling (the most
            it can cost) and the expected cost, in minutes and in money; a sweep is never billed above the ceiling it was quoted. {TAX_NOTE}
          </p>
          <p className="text-sm text-ink-muted" data-testid="metering-note">
            {METERING_NOTE}
          </p>
        </div>
        <ul className="grid gap-4 md:grid-cols-3" data-testid="credit-packs">
          {CREDIT_PACKS.map((pack, index) => (
            <li
              key={pack.id}
              className={
                index === 1
                  ? "rounded-xl border-2 border-action bg-surface p-6 shadow-sm"
                  : "rounded-xl border border-line bg-surface p-6"
              }
            >
              <h3 className="text-lg font-semibold">{pack.name}</h3>
              <p className="mt-3 flex items-baseline gap-2">
                <span className="text-3xl font-bold tracking-tight" data-testid={`price-${pack.id}`}>
                  {formatPriceCents(pack.priceCents, pack.currency)}
                </span>
                <span className="text-sm text-ink-muted">before tax</span>
              </p>
              <p className="mt-1 font-mono text-sm">
                {pack.minutes.toLocaleString("en-US")} compute minutes · {centsPerMinute(pack)}¢/min
              </p>
              <p className="mt-3 text-sm text-ink-muted">{pack.summary}</p>
            </li>
          ))}
        </ul>
      </section>

      <section className="rounded-xl border border-line bg-warn-soft p-6" aria-labelledby="caution-heading">
        <h2 id="caution-heading" className="font-semibold">
          What the numbers are for
        </h2>
        <p className="mt-2 text-sm">{SAFETY_CAUTION} Results come from fixed-step integration of simplified contact models; use them to choose game settings, not to certify anything physical.</p>
      </section>
    </div>
  );
}
