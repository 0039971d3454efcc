import Link from "next/link";
import { buttonClasses } from "@/components/ui";

/** Shown in place of a page when the signed-in user's role does not allow it (HTTP-style 403). */
export function Forbidden({ title = "You don't have access to this page", reason, backHref = "/studios", backLabel = "Back to your studios" }: {
  title?: string;
  reason?: string;
  backHref?: string;
  backLabel?: string;
}) {
  return (
    <div className="mx-auto max-w-lg py-16 text-center" data-testid="forbidden">
      <p className="font-mono text-sm tracking-[0.2em] text-kick">403 · FORBIDDEN</p>
      <h1 className="mt-3 text-2xl font-bold tracking-tight">{title}</h1>
      <p className="mt-3 text-ink-muted">{reason ?? "Your role does not include this action. Ask an owner of the studio if you need it."}</p>
      <Link href={backHref} className={buttonClasses("secondary", "mt-8")}>
        {backLabel}
      </Link>
    </div>
  );
}
