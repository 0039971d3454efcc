import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { ApiError } from "@/lib/errors";
import { meterRetrySchema, retryMeterEvent } from "@/lib/billing/finance-ops";
import { pokeOutbox } from "@/lib/outbox/process";
import { PLATFORM_ADMIN } from "@/lib/auth/policies";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

// Puts a meter event the outbox gave up on back in the queue, as it was or re-keyed; audited, idempotent.
export const POST = withAuth<typeof PLATFORM_ADMIN, { outboxId: string }>(PLATFORM_ADMIN, async ({ req, params, user }) => {
  const outboxId = Number(params.outboxId);
  if (!/^\d{1,12}$/.test(params.outboxId) || !Number.isSafeInteger(outboxId) || outboxId < 1) throw new ApiError("validation_failed", "outboxId: must be a positive whole number.", "outboxId");
  const input = await parseBody(req, meterRetrySchema);
  const result = await retryMeterEvent(await getDb(), user!, outboxId, input);
  if (result.state === "queued") pokeOutbox();
  return json(result, result.state === "queued" ? 202 : 200);
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
