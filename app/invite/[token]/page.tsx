import type { Metadata } from "next";
import { AcceptInvite } from "@/components/invite/accept-invite";
import { mailboxEnabled } from "@/lib/ui/mailbox";

export const metadata: Metadata = { title: "Studio invitation" };

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return <AcceptInvite token={token} mailboxEnabled={mailboxEnabled()} />;
}
