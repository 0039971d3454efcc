/**
 * The sweep page's first cells request, started by the HTML instead of after hydration. The page
 * sends a small inline script (with the request's CSP nonce) that asks for the cells as soon as the
 * browser parses it, while the page's scripts are still loading; the cells hook then takes that
 * answer for its first read instead of asking again. Without it, the request left only once about
 * 300 kB of scripts had loaded and hydrated, and the map waited for its round trip after that.
 * Plain module (no "use client"): the server page writes the script, the client hook takes the answer.
 */

/** The first read of a sweep's cells (every cell: nothing held yet), as the cells hook asks for it. */
export function firstCellsUrl(studioId: string, sweepId: string): string {
  return `/api/v1/studios/${encodeURIComponent(studioId)}/sweeps/${encodeURIComponent(sweepId)}/cells?after=0`;
}

/** What the early request leaves for the hook: the status and the body's text, or null if it failed to reach the server. */
export interface EarlyAnswer {
  status: number;
  text: string;
}

const GLOBAL = "__kickdriftEarly";

/**
 * The inline script: starts the request with the same headers and credentials as apiFetch and keeps
 * its promise under the URL. A browser without fetch, or a failure, leaves the hook to ask itself.
 */
export function earlyFetchScript(url: string): string {
  // JSON.stringify writes a safe JS string literal; "<" is escaped so the text cannot close the script element.
  const literal = JSON.stringify(url).replace(/</g, "\\u003c");
  return `(function(){try{var u=${literal},w=window,m=w.${GLOBAL}||(w.${GLOBAL}={});m[u]=fetch(u,{headers:{accept:"application/json"},credentials:"same-origin",cache:"no-store"}).then(function(r){return r.text().then(function(t){return{status:r.status,text:t}})},function(){return null})}catch(e){}})();`;
}

/**
 * The early answer for this URL, once: later reads (polls, refetches) ask the server themselves.
 * Undefined when the page started no request for it (another page, or the script did not run).
 */
export function takeEarlyAnswer(url: string): Promise<EarlyAnswer | null> | undefined {
  if (typeof window === "undefined") return undefined;
  const map = (window as unknown as Record<string, Record<string, Promise<EarlyAnswer | null>> | undefined>)[GLOBAL];
  const answer = map?.[url];
  if (answer) delete map[url];
  return answer;
}
