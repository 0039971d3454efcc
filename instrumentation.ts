// Runs once per Next.js server process. The Node-only work lives in db/startup.ts behind this
// runtime check (written inline so the Edge build drops the import entirely); it is idempotent,
// so a second register() call does nothing new.
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME === "nodejs") {
    // Before the first request: the sign-in limits need the client's real address (see lib/ops/peer-address.ts).
    const { installPeerAddressStamp } = await import("./lib/ops/peer-address");
    installPeerAddressStamp();
    const { startServerServices } = await import("./db/startup");
    await startServerServices();
  }
}
