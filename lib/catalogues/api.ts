import { z } from "@/lib/zod";
/** Policies of the catalogue routes: the same as the sweep routes (a check is a sweep). */
import { SWEEP_READ, SWEEP_WRITE } from "@/lib/queue/api";

/** Reading catalogues and checks: any member (finance too), and read or write tokens. */
export const CATALOGUE_READ = SWEEP_READ;
/** Uploading catalogues and running checks: engineers and owners, and write tokens. */
export const CATALOGUE_WRITE = SWEEP_WRITE;

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
