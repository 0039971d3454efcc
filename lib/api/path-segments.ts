import "server-only";

/**
 * Whether every segment of a URL path decodes as percent-encoded UTF-8. A segment such as "%ZZ"
 * or "%E0%A4" names nothing we store; the router would fail decoding it, so such paths are
 * answered 404 before routing (proxy.ts).
 */
export function pathDecodes(pathname: string): boolean {
  for (const segment of pathname.split("/")) {
    if (!segment.includes("%")) continue;
    try {
      decodeURIComponent(segment);
    } catch {
      return false;
    }
  }
  return true;
}
