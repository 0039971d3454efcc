import type { Metadata } from "next";
import { AcceptInvite } from "@/components/invite/accept-invite";
import { isMailFakeEnabled } from "@/lib/mail/mode";

export const metadata: Metadata = { title: "Studio invitation" };

export default async function InvitePage({
  params,
  searchParams,
}: {
  params: Promise<{ token: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const [{ token }, query] = await Promise.all([params, searchParams]);
  return <AcceptInvite token={token} mailboxEnabled={isMailFakeEnabled()} autoAccept={query.accept === "1"} />;
}
