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
/** The answers that have arrived, by URL: what the hook can take synchronously, while the page hydrates. */
const ARRIVED = "__kickdriftEarlyArrived";

/**
 * The inline script: starts the request with the same headers and credentials as apiFetch and keeps
 * its promise under the URL. A browser without fetch, or a failure, leaves the hook to ask itself.
 */
export function earlyFetchScript(url: string): string {
  // JSON.stringify writes a safe JS string literal; "<" is escaped so the text cannot close the script element.
  const literal = JSON.stringify(url).replace(/</g, "\\u003c");
  return `(function(){try{var u=${literal},w=window,m=w.${GLOBAL}||(w.${GLOBAL}={}),d=w.${ARRIVED}||(w.${ARRIVED}={});m[u]=fetch(u,{headers:{accept:"application/json"},credentials:"same-origin",cache:"no-store"}).then(function(r){return r.text().then(function(t){return{status:r.status,text:t}})},function(){return null}).then(function(a){if(u in m)d[u]=a;return a})}catch(e){}})();`;
}

/**
 * The early answer for this URL, once: later reads (polls, refetches) ask the server themselves.
 * Undefined when the page started no request for it (another page, or the script did not run).
 */
export function takeEarlyAnswer(url: string): Promise<EarlyAnswer | null> | undefined {
  if (typeof window === "undefined") return undefined;
  const answer = earlyMaps().pending?.[url];
  forget(url);
  return answer;
}

/**
 * The early answer for this URL if it has already arrived (the usual case by the time the page has
 * loaded its scripts and hydrates), taken as takeEarlyAnswer takes it: once. Undefined when it has
 * not arrived yet (the request stays for takeEarlyAnswer) or the page started none. This lets the
 * page draw the map with every cell in the commit that hydrates it, instead of first drawing every
 * cell as not computed and waiting for the query's answer to go round the event loop.
 */
export function takeArrivedEarlyAnswer(url: string): EarlyAnswer | null | undefined {
  if (typeof window === "undefined") return undefined;
  const { pending, arrived } = earlyMaps();
  if (!pending?.[url] || !arrived || !(url in arrived)) return undefined;
  const answer = arrived[url];
  forget(url);
  return answer;
}

function earlyMaps() {
  const w = window as unknown as Record<string, unknown>;
  return {
    pending: w[GLOBAL] as Record<string, Promise<EarlyAnswer | null>> | undefined,
    arrived: w[ARRIVED] as Record<string, EarlyAnswer | null> | undefined,
  };
}

function forget(url: string): void {
  const { pending, arrived } = earlyMaps();
  if (pending) delete pending[url];
  if (arrived) delete arrived[url];
}
