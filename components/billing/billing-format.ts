export { formatMinutes } from "@/lib/billing/format";
export { formatPriceCents } from "@/lib/billing/packs";

export const TAX_NOTE = "Prices before tax; tax handling is out of scope.";

export const billingApi = (studioId: string) => `/api/v1/studios/${encodeURIComponent(studioId)}/billing`;
