"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";
import type { ReactNode } from "react";
import { RoleBadge, cx } from "@/components/ui";
import { formatDateTime } from "@/lib/ui/format";
import { useStudio } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";

/** Heading and tabs shared by a studio's pages. Owner-only tabs are shown to owners only. */
export function StudioShell({ studioId, studioName, role, children }: { studioId: string; studioName: string; role: StudioRole | null; children: ReactNode }) {
  // The server guard already loaded the name; the query keeps it current after a rename.
  const studio = useStudio(studioId);
  const pathname = usePathname();
  const base = `/studios/${studioId}`;
  const tabs = [
    { href: base, label: "Overview" },
    { href: `${base}/sweeps`, label: "Sweeps" },
    { href: `${base}/catalogues`, label: "Catalogues" },
    { href: `${base}/snapshots`, label: "Snapshots" },
  ];
  if (role === "owner") {
    tabs.push({ href: `${base}/members`, label: "Members" }, { href: `${base}/tokens`, label: "API tokens" }, { href: `${base}/webhooks`, label: "Webhooks" });
  }
  if (role === "owner" || role === "finance") {
    tabs.push({ href: `${base}/billing`, label: "Billing" }, { href: `${base}/invoices`, label: "Invoices" });
  }
  tabs.push({ href: "/help", label: "Help" });
  return (
    <div>
      <div className="mb-6 flex flex-wrap items-end justify-between gap-4 border-b border-line pb-4">
        <div className="space-y-1">
          <Link href="/studios" className="font-mono text-xs uppercase tracking-[0.18em] text-kick hover:underline">
            Studios
          </Link>
          <h1 className="text-3xl font-bold tracking-tight" data-testid="studio-name">
            {studio.data?.studio.name ?? studioName}
          </h1>
        </div>
        {role ? (
          <p className="flex items-center gap-2 text-sm text-ink-muted" data-testid="my-role">
            Your role <RoleBadge role={role} />
          </p>
        ) : (
          <p className="text-sm text-ink-muted">Viewing as platform admin</p>
        )}
      </div>
      {studio.data?.studio.status === "suspended" ? (
        <div role="alert" className="mb-6 rounded-md border-2 border-danger bg-danger-soft p-4 text-sm text-ink" data-testid="studio-suspended-banner">
          <p className="font-semibold">This studio is suspended{studio.data.suspension?.since ? ` since ${formatDateTime(studio.data.suspension.since)}` : ""}.</p>
          <p className="mt-1">
            Its sweeps are paused and new sweeps are refused until a Kickdrift administrator lifts the suspension. You can still read and export every result.
            {studio.data.suspension?.reason ? ` Reason given: “${studio.data.suspension.reason}”.` : ""}
          </p>
        </div>
      ) : null}
      {tabs.length > 1 ? (
        <nav aria-label="Studio" className="mb-6 flex flex-wrap gap-1">
          {tabs.map((tab) => {
            // The Sweeps tab stays marked on the builder, a sweep and its cells; Invoices on one invoice;
            // Catalogues on a catalogue and its checks.
            const active = pathname === tab.href || ((tab.label === "Sweeps" || tab.label === "Invoices" || tab.label === "Catalogues") && pathname.startsWith(`${tab.href}/`));
            return (
              <Link
                key={tab.href}
                href={tab.href}
                aria-current={active ? "page" : undefined}
                className={cx("rounded-md px-3 py-1.5 text-sm font-medium", active ? "bg-ink text-paper" : "text-ink-muted hover:bg-surface-muted hover:text-ink")}
              >
                {tab.label}
              </Link>
            );
          })}
        </nav>
      ) : null}
      {children}
    </div>
  );
}
