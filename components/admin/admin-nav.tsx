import Link from "next/link";

/** The admin area's pages, in one place. */
export const ADMIN_PAGES = [
  { href: "/admin", label: "Studios and users" },
  { href: "/admin/finance", label: "Finance" },
] as const;

export function AdminNav({ current }: { current: string }) {
  return (
    <nav aria-label="Admin" className="mb-6 flex gap-1">
      {ADMIN_PAGES.map((page) => (
        <Link
          key={page.href}
          href={page.href}
          aria-current={current === page.href ? "page" : undefined}
          className={current === page.href ? "rounded-md bg-ink px-3 py-1.5 text-sm font-medium text-paper" : "rounded-md px-3 py-1.5 text-sm font-medium text-ink-muted hover:bg-surface-muted hover:text-ink"}
        >
          {page.label}
        </Link>
      ))}
    </nav>
  );
}
