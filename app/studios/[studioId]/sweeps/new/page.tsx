import type { Metadata } from "next";
import { getDb } from "@/db/client";
import { SweepBuilder } from "@/components/sweeps/sweep-builder";
import { requireStudio } from "@/lib/auth/page-guard";
import { ApiError } from "@/lib/errors";
import { snapshotOfStudio, snapshotSweepStart } from "@/lib/snapshots/store";
import { duplicateSpec, type SweepSpecInput } from "@/lib/sweeps/spec";
import { sweepOfStudio } from "@/lib/queue/api";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";

export const metadata: Metadata = { title: "New sweep" };
export const dynamic = "force-dynamic";

export default async function NewSweepRoute({ params, searchParams }: { params: Promise<{ studioId: string }>; searchParams: Promise<{ snapshot?: string | string[]; template?: string | string[]; from?: string | string[] }> }) {
  const { studioId } = await params;
  const { snapshot, template, from } = await searchParams;
  const snapshotId = typeof snapshot === "string" ? snapshot : undefined;
  const callbackUrl = `/studios/${studioId}/sweeps/new${snapshotId ? `?snapshot=${encodeURIComponent(snapshotId)}` : ""}`;
  // Finance members read sweeps and invoices but do not spend compute: they get the 403 page here.
  const access = await requireStudio(studioId, { callbackUrl, roles: ["owner", "engineer"] });
  // "New sweep from this snapshot": the snapshot's scene goes into the spec inline (resolved here, scoped by studio).
  let initialSpec: SweepSpecInput | undefined;
  let namePlaceholder: string | undefined;
  // Why a snapshot's first sweep has the axes it has (lib/snapshots/suggest.ts), shown beside the scene.
  let suggestionReasoning: string[] | undefined;
  // "Duplicate and edit": a sweep of this studio as the starting spec, under a name of its own.
  if (typeof from === "string" && !snapshotId) {
    try {
      const source = await sweepOfStudio(await getDb(), access.studio.id, from);
      initialSpec = duplicateSpec(source.spec);
      namePlaceholder = `Copy of ${source.name}`.slice(0, SPEC_LIMITS.maxNameLength);
    } catch (error) {
      if (!(error instanceof ApiError && error.status === 404)) throw error;
    }
  }
  if (snapshotId) {
    try {
      const start = snapshotSweepStart(await snapshotOfStudio(await getDb(), access.studio.id, snapshotId));
      initialSpec = start.sweepSpec;
      suggestionReasoning = start.sweepSuggestion.reasoning;
    } catch (error) {
      if (!(error instanceof ApiError && error.status === 404)) throw error;
    }
  }
  return <SweepBuilder studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialSpec={initialSpec} snapshotId={initialSpec ? snapshotId : undefined} templateId={typeof template === "string" ? template : undefined} namePlaceholder={namePlaceholder} suggestionReasoning={suggestionReasoning} />;
}
