export { formatMinutes } from "@/lib/billing/format";
export { formatPriceCents } from "@/lib/billing/packs";

export const TAX_NOTE = "Prices before tax; tax handling is out of scope.";
export const th = "px-3 py-2 text-left text-xs font-semibold uppercase tracking-wider text-ink-muted";
export const td = "px-3 py-2.5";

export const billingApi = (studioId: string) => `/api/v1/studios/${encodeURIComponent(studioId)}/billing`;
