import type { Metadata } from "next";
import { headers } from "next/headers";
import { connection } from "next/server";
import type { ReactNode } from "react";
import "./globals.css";
import { monoFont, sansFont } from "./fonts";
import { Providers } from "@/components/providers";
import { SiteFooter } from "@/components/site-footer";
import { SiteHeader } from "@/components/site-header";
import { demoBannerText, isMailFakeEnabled } from "@/lib/mail/mode";
import { THEME_BOOT_SCRIPT } from "@/lib/ui/theme";

export const metadata: Metadata = {
  title: { default: "Kickdrift — stability maps for game collision physics", template: "%s · Kickdrift" },
  description:
    "Kickdrift sweeps stiffness, timestep, mass ratio and speed of your game's contacts on our compute and shows where each integrator holds and where it fails.",
};

export default async function RootLayout({ children }: { children: ReactNode }) {
  // The header's Mailbox link follows the running server's SMTP setting, so render per request, not at build.
  await connection();
  const banner = demoBannerText();
  // The CSP nonce of this request (proxy.ts): the inline theme script runs only with it.
  const nonce = (await headers()).get("x-nonce") ?? undefined;
  return (
    // data-theme is set before hydration by the boot script, so React must not complain about it.
    <html lang="en" className={`${sansFont.variable} ${monoFont.variable}`} suppressHydrationWarning>
      <head>
        <script nonce={nonce} dangerouslySetInnerHTML={{ __html: THEME_BOOT_SCRIPT }} />
      </head>
      <body className="flex min-h-screen flex-col bg-paper font-sans text-ink">
        <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-4 focus:top-4 focus:z-50 focus:rounded-md focus:bg-surface focus:px-3 focus:py-2">
          Skip to content
        </a>
        <Providers>
          {banner ? (
            // Slim, on every page of a demo instance: nobody mistakes it for a deployment that charges or mails.
            <p role="note" data-testid="demo-banner" className="bg-ink px-4 py-1 text-center text-xs font-medium text-paper">
              {banner}
            </p>
          ) : null}
          <SiteHeader mailboxEnabled={isMailFakeEnabled()} />
          <main id="main" className="mx-auto w-full max-w-6xl flex-1 px-4 py-8 sm:px-6">
            {children}
          </main>
          <SiteFooter />
        </Providers>
      </body>
    </html>
  );
}
