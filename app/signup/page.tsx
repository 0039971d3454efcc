import type { Metadata } from "next";
import { SignUpForm } from "@/components/auth/sign-up-form";
import { AuthPanel } from "@/components/ui";
import { safeCallbackUrl } from "@/lib/ui/callback-url";

export const metadata: Metadata = { title: "Create an account" };

export default async function SignUpPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  return (
    <AuthPanel title="Create your Kickdrift account" intro="Then create a studio and invite the people who tune your game's physics.">
      <SignUpForm callbackUrl={safeCallbackUrl(params.callbackUrl)} />
    </AuthPanel>
  );
}
