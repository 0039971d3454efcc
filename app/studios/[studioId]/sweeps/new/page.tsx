import type { Metadata } from "next";
import { getDb } from "@/db/client";
import { SweepBuilder } from "@/components/sweeps/sweep-builder";
import { requireStudio } from "@/lib/auth/page-guard";
import { ApiError } from "@/lib/errors";
import { snapshotOfStudio, snapshotSweepSpec } from "@/lib/snapshots/store";
import type { SweepSpecInput } from "@/lib/sweeps/spec";

export const metadata: Metadata = { title: "New sweep" };
export const dynamic = "force-dynamic";

export default async function NewSweepRoute({ params, searchParams }: { params: Promise<{ studioId: string }>; searchParams: Promise<{ snapshot?: string | string[]; template?: string | string[] }> }) {
  const { studioId } = await params;
  const { snapshot, template } = await searchParams;
  const snapshotId = typeof snapshot === "string" ? snapshot : undefined;
  const callbackUrl = `/studios/${studioId}/sweeps/new${snapshotId ? `?snapshot=${encodeURIComponent(snapshotId)}` : ""}`;
  // Finance members read sweeps and invoices but do not spend compute: they get the 403 page here.
  const access = await requireStudio(studioId, { callbackUrl, roles: ["owner", "engineer"] });
  // "New sweep from this snapshot": the snapshot's scene goes into the spec inline (resolved here, scoped by studio).
  let initialSpec: SweepSpecInput | undefined;
  if (snapshotId) {
    try {
      initialSpec = snapshotSweepSpec(await snapshotOfStudio(await getDb(), access.studio.id, snapshotId));
    } catch (error) {
      if (!(error instanceof ApiError && error.status === 404)) throw error;
    }
  }
  return <SweepBuilder studioId={access.studio.id} studioName={access.studio.name} role={access.role} initialSpec={initialSpec} snapshotId={initialSpec ? snapshotId : undefined} templateId={typeof template === "string" ? template : undefined} />;
}
