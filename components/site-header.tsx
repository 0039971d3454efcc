"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";
import { signOut, useSession } from "next-auth/react";
import { BrandMark } from "@/components/brand-mark";
import { ThemeToggle } from "@/components/theme-toggle";
import { buttonClasses, cx } from "@/components/ui";
import { apiFetch } from "@/lib/ui/api";
import { sessionUser } from "@/lib/ui/session";

type NavItem = { href: string; label: string };

export function SiteHeader({ mailboxEnabled }: { mailboxEnabled: boolean }) {
  const { data: session, status } = useSession();
  const pathname = usePathname();
  const user = status === "authenticated" ? sessionUser(session) : null;
  const signedIn = Boolean(user);
  const isAdmin = Boolean(user?.isAdmin);

  const nav: NavItem[] = [];
  if (signedIn) nav.push({ href: "/studios", label: "Studios" });
  if (signedIn && isAdmin) nav.push({ href: "/admin", label: "Admin" });
  // Captured mail holds sign-in and reset links: the mailbox is a platform admin's page.
  if (mailboxEnabled && isAdmin) nav.push({ href: "/mail", label: "Mailbox" });

  return (
    <header className="border-b border-line bg-surface/80 backdrop-blur">
      <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-6 gap-y-3 px-4 py-3 sm:px-6">
        <Link href="/" className="flex items-center gap-2.5 text-lg font-bold tracking-tight" aria-label="Kickdrift home">
          <BrandMark className="h-8 w-8" />
          <span>Kickdrift</span>
        </Link>
        <nav aria-label="Main" className="flex flex-1 items-center gap-1">
          {nav.map((item) => {
            const active = pathname === item.href || pathname.startsWith(`${item.href}/`);
            return (
              <Link
                key={item.href}
                href={item.href}
                aria-current={active ? "page" : undefined}
                className={cx(
                  "rounded-md px-3 py-1.5 text-sm font-medium",
                  active ? "bg-surface-muted text-ink" : "text-ink-muted hover:text-ink",
                )}
              >
                {item.label}
              </Link>
            );
          })}
        </nav>
        <div className="flex items-center gap-2">
          <ThemeToggle />
          {signedIn ? (
            <>
              <span className="hidden max-w-[16rem] truncate text-sm text-ink-muted sm:inline" data-testid="signed-in-as">
                {user?.name || user?.email}
              </span>
              <button type="button" className={buttonClasses("secondary", "py-1.5")} onClick={() => void signOut({ callbackUrl: "/" })}>
                Sign out
              </button>
              <button
                type="button"
                className={buttonClasses("ghost", "hidden py-1.5 md:inline-flex")}
                title="Ends your sessions in every browser and device, this one included"
                onClick={() => void apiFetch("/api/v1/me/sessions", { method: "DELETE" }).finally(() => void signOut({ callbackUrl: "/" }))}
              >
                Sign out everywhere
              </button>
            </>
          ) : status === "loading" ? null : (
            <>
              <Link href="/signin" className={buttonClasses("ghost", "py-1.5")}>
                Sign in
              </Link>
              <Link href="/signup" className={buttonClasses("primary", "py-1.5")}>
                Create account
              </Link>
            </>
          )}
        </div>
      </div>
    </header>
  );
}
