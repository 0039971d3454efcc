import Link from "next/link";
import { buttonClasses } from "@/components/ui";

export default function NotFound() {
  return (
    <div className="mx-auto max-w-lg py-16 text-center" data-testid="not-found">
      <p className="font-mono text-sm tracking-[0.2em] text-kick">404 · NOT FOUND</p>
      <h1 className="mt-3 text-2xl font-bold tracking-tight">This page does not exist</h1>
      <p className="mt-3 text-ink-muted">The address may be mistyped, or what it pointed to is gone or not shared with you.</p>
      <div className="mt-8 flex justify-center gap-3">
        <Link href="/" className={buttonClasses("secondary")}>
          Home
        </Link>
        <Link href="/studios" className={buttonClasses("primary")}>
          Your studios
        </Link>
      </div>
    </div>
  );
}
