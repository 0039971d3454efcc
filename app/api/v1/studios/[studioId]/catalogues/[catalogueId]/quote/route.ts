import { getDb } from "@/db/client";
import { parseBody } from "@/lib/api/body";
import { otherMethods } from "@/lib/api/methods";
import { json } from "@/lib/api/respond";
import { withAuth } from "@/lib/auth/guard";
import { checkQuoteRequestSchema } from "@/lib/catalogues/api";
import { ENGINEERS_WRITE } from "@/lib/auth/policies";
import { catalogueOfStudio, quoteCheck } from "@/lib/catalogues/store";

export const runtime = "nodejs";
export const dynamic = "force-dynamic";

/** The quote of a catalogue check: the same quote as the sweep it would submit. */
export const POST = withAuth<typeof ENGINEERS_WRITE, { studioId: string; catalogueId: string }>(ENGINEERS_WRITE, async ({ req, studio, params }) => {
  const { settings } = await parseBody(req, checkQuoteRequestSchema);
  const db = await getDb();
  const catalogue = await catalogueOfStudio(db, studio.id, params.catalogueId);
  const quoted = await quoteCheck(db, studio.id, catalogue, settings);
  return json({ quote: quoted.quote, settings: quoted.settings });
});

export const { GET, PUT, PATCH, DELETE, OPTIONS } = otherMethods(["POST"]);
