import type { Metadata } from "next";
import { ResetConfirmForm } from "@/components/auth/reset-confirm-form";
import { AuthPanel } from "@/components/ui";

export const metadata: Metadata = { title: "Choose a new password" };

export default async function ResetConfirmPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return (
    <AuthPanel title="Choose a new password" intro="The link from your e-mail works once and expires one hour after it was sent.">
      <ResetConfirmForm token={token} />
    </AuthPanel>
  );
}
