"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";
import { cx } from "@/components/ui";

/** The admin console's sections; one list, so every admin page shows the same navigation. */
const SECTIONS = [
  { href: "/admin", label: "Studios" },
  { href: "/admin/queue", label: "Queue" },
  { href: "/admin/users", label: "Users" },
  { href: "/admin/audit", label: "Audit log" },
  { href: "/admin/finance", label: "Finance" },
] as const;

export function AdminNav() {
  const pathname = usePathname();
  return (
    <nav aria-label="Admin sections" className="mb-6 flex flex-wrap gap-2 border-b border-line pb-3">
      {SECTIONS.map((s) => {
        const current = s.href === "/admin" ? pathname === "/admin" || pathname.startsWith("/admin/studios") : pathname.startsWith(s.href);
        return (
          <Link
            key={s.href}
            href={s.href}
            aria-current={current ? "page" : undefined}
            className={cx("rounded-md px-3 py-1.5 text-sm font-medium", current ? "bg-surface-muted text-ink" : "text-ink-muted hover:text-ink")}
          >
            {s.label}
          </Link>
        );
      })}
    </nav>
  );
}
