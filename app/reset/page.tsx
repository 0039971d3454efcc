import type { Metadata } from "next";
import { ResetRequestForm } from "@/components/auth/reset-request-form";
import { AuthPanel } from "@/components/ui";
import { isMailFakeEnabled } from "@/lib/mail/mode";

export const metadata: Metadata = { title: "Reset your password" };

export default function ResetRequestPage() {
  return (
    <AuthPanel title="Reset your password" intro="We will e-mail you a link to choose a new one.">
      <ResetRequestForm mailboxEnabled={isMailFakeEnabled()} />
    </AuthPanel>
  );
}
