/**
 * The landing page's stability map, computed (not drawn by hand) from the analytic limit of
 * symplectic Euler on one undamped contact spring: the step stays bounded while ω·dt < 2,
 * with ω = √(k/m) (from memory: the standard linear stability result for the harmonic oscillator).
 * Real sweeps simulate every cell; this picture only shows the shape such a map takes.
 */
const COLUMNS = 18;
const ROWS = 12;
const MASS_KG = 1;
const STIFFNESS_MIN_N_PER_M = 1e2;
const STIFFNESS_MAX_N_PER_M = 1e7;
const TIMESTEP_MIN_S = 1 / 480;
const TIMESTEP_MAX_S = 1 / 30;

type Band = "stable" | "near-limit" | "diverges";

function logSpaced(min: number, max: number, count: number, index: number): number {
  return Math.exp(Math.log(min) + ((Math.log(max) - Math.log(min)) * index) / (count - 1));
}

function bandOf(omegaDt: number): Band {
  if (omegaDt < 1) return "stable";
  if (omegaDt < 2) return "near-limit";
  return "diverges";
}

const BAND_FILL: Record<Band, string> = {
  stable: "var(--kd-verdict-stable)",
  "near-limit": "var(--kd-verdict-drift)",
  diverges: "var(--kd-verdict-exploded)",
};

export function StabilityMapIllustration() {
  const cell = 18;
  const gap = 2;
  const left = 44;
  const top = 10;
  const width = left + COLUMNS * (cell + gap) + 8;
  const height = top + ROWS * (cell + gap) + 34;
  const cells = [];
  for (let row = 0; row < ROWS; row += 1) {
    // Row 0 at the top is the largest timestep, as a programmer reads "coarser step, higher up".
    const timestepS = logSpaced(TIMESTEP_MIN_S, TIMESTEP_MAX_S, ROWS, ROWS - 1 - row);
    for (let column = 0; column < COLUMNS; column += 1) {
      const stiffnessNPerM = logSpaced(STIFFNESS_MIN_N_PER_M, STIFFNESS_MAX_N_PER_M, COLUMNS, column);
      const omegaDt = Math.sqrt(stiffnessNPerM / MASS_KG) * timestepS;
      const band = bandOf(omegaDt);
      cells.push(
        <rect
          key={`${row}-${column}`}
          x={left + column * (cell + gap)}
          y={top + row * (cell + gap)}
          width={cell}
          height={cell}
          rx={3}
          fill={BAND_FILL[band]}
          opacity={band === "stable" ? 0.55 + 0.45 * Math.min(1, omegaDt) : 0.95}
        >
          <title>{`k = ${stiffnessNPerM.toExponential(1)} N/m, dt = ${(timestepS * 1000).toFixed(2)} ms, ω·dt = ${omegaDt.toFixed(2)}`}</title>
        </rect>,
      );
    }
  }
  const gridBottom = top + ROWS * (cell + gap);
  return (
    <figure className="rounded-xl border border-line bg-surface p-4 shadow-sm">
      <svg viewBox={`0 0 ${width} ${height}`} role="img" aria-labelledby="kd-map-title" className="w-full">
        <title id="kd-map-title">Stability map of contact stiffness against timestep for symplectic Euler</title>
        {cells}
        <text x={left - 8} y={top + 10} textAnchor="end" fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)">
          1/30
        </text>
        <text x={left - 8} y={gridBottom - 6} textAnchor="end" fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)">
          1/480
        </text>
        <text x={12} y={top + (ROWS * (cell + gap)) / 2} fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)" transform={`rotate(-90 12 ${top + (ROWS * (cell + gap)) / 2})`} textAnchor="middle">
          timestep (s)
        </text>
        <text x={left} y={gridBottom + 14} fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)">
          10²
        </text>
        <text x={left + COLUMNS * (cell + gap) - gap} y={gridBottom + 14} textAnchor="end" fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)">
          10⁷
        </text>
        <text x={left + (COLUMNS * (cell + gap)) / 2} y={gridBottom + 28} textAnchor="middle" fontSize="9" fill="var(--kd-ink-muted)" fontFamily="var(--font-mono)">
          contact stiffness (N/m), 1 kg body
        </text>
      </svg>
      <figcaption className="mt-3 space-y-2 text-xs text-ink-muted">
        <div className="flex flex-wrap gap-x-4 gap-y-1">
          <Legend colour={BAND_FILL.stable} label="ω·dt < 1 — stable with margin" />
          <Legend colour={BAND_FILL["near-limit"]} label="1 ≤ ω·dt < 2 — bounded, large energy error" />
          <Legend colour={BAND_FILL.diverges} label="ω·dt ≥ 2 — explodes" />
        </div>
        <p>Drawn from the analytic limit of symplectic Euler for one contact spring. A sweep simulates every cell instead.</p>
      </figcaption>
    </figure>
  );
}

function Legend({ colour, label }: { colour: string; label: string }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <span aria-hidden="true" className="inline-block h-2.5 w-2.5 rounded-sm" style={{ background: colour }} />
      {label}
    </span>
  );
}
