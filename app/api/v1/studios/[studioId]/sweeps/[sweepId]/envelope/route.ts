import { getDb } from "@/db/client";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { VERDICTS } from "@/lib/physics/types";
import { sweepOfStudio } from "@/lib/queue/api";
import { storedVerdictCodes } from "@/lib/queue/views";
import { EnvelopeInputError, computeEnvelope, envelopeCsv, envelopeDamping, envelopeDocument, envelopeFriction, type EnvelopeBound } from "@/lib/sweeps/envelope";
import { withContactTuning } from "@/lib/sweeps/contact-tuning";
import { expandAxes } from "@/lib/sweeps/grid";
import { MEMBERS_READ } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

function numberParam(url: URL, name: string, fallback: number | undefined): number {
  const raw = url.searchParams.get(name);
  if (raw === null || raw === "") {
    if (fallback === undefined) throw new ApiError("validation_failed", `${name} is required.`, name);
    return fallback;
  }
  const value = Number(raw);
  if (!/^[0-9.eE+-]+$/.test(raw) || !Number.isFinite(value)) throw new ApiError("validation_failed", `${name} must be a number; got "${raw}".`, name);
  return value;
}

export const GET = withAuth<typeof MEMBERS_READ, { studioId: string; sweepId: string }>(MEMBERS_READ, async ({ req, studio, params }) => {
  const url = new URL(req.url);
  const format = url.searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") throw new ApiError("validation_failed", `format must be json or csv; got "${format}".`, "format");
  const bound = (url.searchParams.get("bound") ?? "max") as EnvelopeBound;
  const x = numberParam(url, "x", 0);
  const y = numberParam(url, "y", 1);
  const margin = numberParam(url, "margin", 0);
  const atRaw = url.searchParams.get("at");
  const at = atRaw ? atRaw.split(",").map((part) => (/^[0-9]{1,9}$/.test(part) ? Number(part) : Number.NaN)) : undefined;
  const db = await getDb();
  const sweep = await sweepOfStudio(db, studio.id, params.sweepId);
  const axes = expandAxes(sweep.spec);
  const codes = await storedVerdictCodes(db, sweep);
  let envelope;
  try {
    envelope = computeEnvelope({ axes, verdictAt: (index) => VERDICTS[codes[index]], x, y, margin, bound, at });
  } catch (error) {
    if (error instanceof EnvelopeInputError) throw new ApiError("invalid_value", error.message, error.field);
    throw error;
  }
  const spec = sweep.spec;
  const document = envelopeDocument(envelope, {
    sweepId: sweep.id,
    name: sweep.name,
    specHash: sweep.specHash,
    axes,
    x,
    y,
    verdictRules: spec.scenario.verdictRules ?? 1,
    tolerances: spec.scenario.tolerances as unknown as Record<string, number | undefined>,
    damping: envelopeDamping(spec, axes),
    friction: envelopeFriction(spec, axes),
  });
  // Each row's contact at its limit as natural frequency and damping ratio (lib/sweeps/contact-tuning.ts).
  if (format === "json") return json({ envelope: withContactTuning(envelope, spec, axes, { x, y, at }), document });
  const text = envelopeCsv(document);
  return new Response(text, {
    status: 200,
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${sweep.id}-envelope.csv"`,
      "cache-control": "no-store",
    },
  });
});

export const { POST, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["GET"]);
