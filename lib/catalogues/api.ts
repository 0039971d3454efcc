import "server-only";
import { z } from "@/lib/zod";

/**
 * The largest multipart body an upload may send: twice the file limit (a table corrected on the
 * upload page travels with the file it was corrected from) plus room for the form's framing.
 */
export const MAX_UPLOAD_BODY_BYTES = 2 * 256 * 1024 + 16 * 1024;

// Request bodies of the catalogue-check routes (the OpenAPI document, lib/api/openapi, is generated from these).

/** POST …/checks. */
export const submitCheckRequestSchema = z.strictObject({
  settings: z.unknown().optional(),
  acceptedQuoteMs: z
    .number({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .int({ error: "acceptedQuoteMs must be an integer number of milliseconds" })
    .min(0, { error: "acceptedQuoteMs must be ≥ 0" })
    .optional(),
});

/** POST …/quote. */
export const checkQuoteRequestSchema = z.strictObject({ settings: z.unknown().optional() });
