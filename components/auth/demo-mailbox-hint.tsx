import Link from "next/link";

/** The line under "we sent you a link" on a demo instance, where mail is captured, not delivered. */
export function DemoMailboxHint({ enabled }: { enabled: boolean }) {
  if (!enabled) return null;
  return (
    <>
      {" "}
      On this demo instance mail is captured, not delivered: a platform admin reads it in the{" "}
      <Link href="/mail" className="underline">
        demo mailbox
      </Link>
      .
    </>
  );
}
