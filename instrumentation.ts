// Runs once per Next.js server process. The Node-only work lives in server/startup.ts behind this
// runtime check (written inline so the Edge build drops the import entirely); it is idempotent,
// so a second register() call does nothing new.
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    // Before the first request: the sign-in limits need the client's real address (see lib/ops/peer-address.ts).
    const { installPeerAddressStamp } = await import("./lib/ops/peer-address");
    installPeerAddressStamp();
    const { startServerServices } = await import("./server/startup");
    try {
      await startServerServices();
    } catch (error) {
      // A production start without SMTP_URL or the Stripe keys: one clear line, and no server at all
      // (Next would otherwise log a stack and go on serving with the fakes' routes half set up).
      if ((error as Error)?.name === "RefusedStart") {
        console.error((error as Error).message);
        process.exit(1);
      }
      throw error;
    }
  }
}
