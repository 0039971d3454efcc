import "server-only";
import http from "node:http";
import { markPeerStampInstalled, PEER_HEADER, peerStampInstalled } from "@/lib/auth/limiter";

/**
 * Next's route handlers see a Request without the TCP connection, and Next copies the socket's
 * address into X-Forwarded-For only when the client sent none, so a client could name any
 * address it liked. Stamping the peer address into a header of our own on every request that
 * reaches this process's HTTP servers (overwriting whatever the client sent under that name)
 * gives lib/auth/limiter.ts's clientAddress the one address the client cannot choose.
 */
export function installPeerAddressStamp(): void {
  if (peerStampInstalled()) return;
  const original = http.Server.prototype.emit;
  http.Server.prototype.emit = function emit(this: http.Server, event: string | symbol, ...args: unknown[]) {
    if (event === "request") {
      const req = args[0] as http.IncomingMessage;
      const peer = req.socket?.remoteAddress;
      if (peer) req.headers[PEER_HEADER] = peer;
      else delete req.headers[PEER_HEADER];
    }
    return original.apply(this, [event, ...args] as unknown as Parameters<typeof original>);
  } as typeof original;
  markPeerStampInstalled();
}
