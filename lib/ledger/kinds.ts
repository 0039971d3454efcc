import "server-only";

/** What a ledger entry records: the domain's words, which the schema (db/schema.ts) takes as the column's type. */
export const LEDGER_KINDS = ["purchase", "usage", "adjustment", "refund"] as const;
export type LedgerKind = (typeof LEDGER_KINDS)[number];
