import Link from "next/link";

export const SAFETY_CAUTION =
  "Simulation results are numerical estimates for tuning game physics, not a basis for safety-critical engineering.";
export const TAX_NOTE = "Prices before tax; tax handling is out of scope.";

export function SiteFooter() {
  return (
    <footer className="mt-16 border-t border-line bg-surface">
      <div className="mx-auto grid max-w-6xl gap-4 px-4 py-8 text-sm text-ink-muted sm:grid-cols-[1fr_auto] sm:px-6">
        <div className="space-y-1.5" data-testid="footer-caution">
          <p>{SAFETY_CAUTION}</p>
          <p>{TAX_NOTE}</p>
        </div>
        <div className="flex items-start gap-4 sm:justify-end">
          <Link href="/#pricing" className="hover:text-ink">
            Credit packs
          </Link>
          <Link href="/" className="hover:text-ink">
            Product
          </Link>
          <span className="font-mono text-xs">© {2026} Kickdrift</span>
        </div>
      </div>
    </footer>
  );
}
