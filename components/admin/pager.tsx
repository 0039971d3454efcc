"use client";
/**
 * Paging for the admin lists: a page of rows and the controls under the table ("21–40 of 45",
 * previous, next). The page resets to the first whenever the list it pages changes length (a new
 * filter), so a search never lands on an empty page.
 */
import { useState } from "react";
import { Button } from "@/components/ui";

export const ADMIN_PAGE_SIZE = 20;

export function usePaged<T>(items: readonly T[], pageSize = ADMIN_PAGE_SIZE) {
  // The page is kept with the list length it was chosen for; another length (a new filter) starts again at the first.
  const [chosen, setChosen] = useState({ page: 0, forLength: items.length });
  const pages = Math.max(1, Math.ceil(items.length / pageSize));
  const current = chosen.forLength === items.length ? Math.min(chosen.page, pages - 1) : 0;
  const setPage = (page: number) => setChosen({ page, forLength: items.length });
  return {
    rows: items.slice(current * pageSize, (current + 1) * pageSize),
    page: current,
    pages,
    first: items.length === 0 ? 0 : current * pageSize + 1,
    last: Math.min(items.length, (current + 1) * pageSize),
    total: items.length,
    setPage,
  };
}

export function Pager({ paged, label }: { paged: ReturnType<typeof usePaged<unknown>>; label: string }) {
  if (paged.total <= ADMIN_PAGE_SIZE && paged.pages === 1) return <p className="mt-3 text-xs text-ink-muted">{paged.total.toLocaleString("en")} {label}</p>;
  return (
    <nav aria-label={`Pages of ${label}`} className="mt-3 flex flex-wrap items-center justify-between gap-3 text-sm" data-testid="pager">
      <span className="text-ink-muted" aria-live="polite">
        {paged.first.toLocaleString("en")}–{paged.last.toLocaleString("en")} of {paged.total.toLocaleString("en")} {label}
      </span>
      <span className="flex gap-2">
        <Button variant="secondary" className="py-1" disabled={paged.page === 0} onClick={() => paged.setPage(paged.page - 1)}>
          Previous
        </Button>
        <Button variant="secondary" className="py-1" disabled={paged.page >= paged.pages - 1} onClick={() => paged.setPage(paged.page + 1)}>
          Next
        </Button>
      </span>
    </nav>
  );
}
