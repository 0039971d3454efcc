/**
 * The sweep page's early cells request (components/sweeps/early-cells.ts): the inline script the
 * server page sends asks for the first cells URL with apiFetch's headers, and the cells hook takes
 * that answer once; every later read (a poll, a refetch) asks the server itself. Run here in a
 * stand-in window whose fetch records what it was asked.
 */
import { afterEach, describe, expect, it } from "vitest";
import { earlyFetchScript, firstCellsUrl, takeArrivedEarlyAnswer, takeEarlyAnswer } from "@/components/sweeps/early-cells";

const globals = globalThis as unknown as { window?: unknown; fetch: typeof fetch };
const realFetch = globals.fetch;

afterEach(() => {
  delete globals.window;
  globals.fetch = realFetch;
});

/** Runs the script as the browser would, with `window` and `fetch` standing in. */
function runScript(script: string, answer: () => Promise<Response>): { asked: { url: string; init: RequestInit }[] } {
  const asked: { url: string; init: RequestInit }[] = [];
  const fakeFetch = (url: string, init: RequestInit) => {
    asked.push({ url, init });
    return answer();
  };
  const window = {} as Record<string, unknown>;
  globals.window = window;
  new Function("window", "fetch", script)(window, fakeFetch);
  return { asked };
}

/** Waits (on the answer's own promise, no timer) until the script has recorded the answer as arrived. */
async function waitForArrival(url: string): Promise<void> {
  const pending = (globals.window as Record<string, Record<string, Promise<unknown>> | undefined>).__kickdriftEarly?.[url];
  await pending;
}

describe("early cells request", () => {
  it("asks for every cell of the sweep (after=0) with the ids encoded as the cells hook writes them", () => {
    expect(firstCellsUrl("std_a b", "swp_x/y")).toBe("/api/v1/studios/std_a%20b/sweeps/swp_x%2Fy/cells?after=0");
  });

  it("is started by the page's script with apiFetch's headers and credentials, and taken by the hook once", async () => {
    const url = firstCellsUrl("std_1", "swp_1");
    const body = JSON.stringify({ cells: [], cursor: "7" });
    const { asked } = runScript(earlyFetchScript(url), async () => new Response(body, { status: 200 }));
    expect(asked).toHaveLength(1);
    expect(asked[0].url).toBe(url);
    expect(asked[0].init).toMatchObject({ headers: { accept: "application/json" }, credentials: "same-origin", cache: "no-store" });
    await expect(takeEarlyAnswer(url)).resolves.toEqual({ status: 200, text: body });
    // Taken once: the next read (a poll after the cursor) goes to the server.
    expect(takeEarlyAnswer(url)).toBeUndefined();
  });

  it("leaves nothing for another URL, and a refused or failed request to the hook's own read", async () => {
    const url = firstCellsUrl("std_1", "swp_1");
    runScript(earlyFetchScript(url), async () => new Response('{"error":{"code":"not_found","message":"No such sweep."}}', { status: 404 }));
    expect(takeEarlyAnswer(firstCellsUrl("std_1", "swp_2"))).toBeUndefined();
    // The hook asks again through apiFetch on anything but 200, so the error reaches the page in its words.
    await expect(takeEarlyAnswer(url)).resolves.toMatchObject({ status: 404 });
    runScript(earlyFetchScript(url), () => Promise.reject(new TypeError("network down")));
    await expect(takeEarlyAnswer(url)).resolves.toBeNull();
  });

  it("hands an answer that has arrived to the hydrating page synchronously, once, and nothing before it arrives", async () => {
    const url = firstCellsUrl("std_1", "swp_1");
    const body = JSON.stringify({ cells: [], cursor: "9" });
    let deliver: (response: Response) => void = () => {};
    runScript(earlyFetchScript(url), () => new Promise<Response>((resolve) => (deliver = resolve)));
    // Not arrived yet: nothing to take now, and the request stays for the query's own first read.
    expect(takeArrivedEarlyAnswer(url)).toBeUndefined();
    deliver(new Response(body, { status: 200 }));
    await waitForArrival(url);
    expect(takeArrivedEarlyAnswer(url)).toEqual({ status: 200, text: body });
    // Taken once, by either way: the query's first read then asks the server itself.
    expect(takeArrivedEarlyAnswer(url)).toBeUndefined();
    expect(takeEarlyAnswer(url)).toBeUndefined();
  });

  it("keeps no arrived copy of an answer the query already took while it was on its way", async () => {
    const url = firstCellsUrl("std_1", "swp_1");
    const body = JSON.stringify({ cells: [], cursor: "3" });
    runScript(earlyFetchScript(url), async () => new Response(body, { status: 200 }));
    await expect(takeEarlyAnswer(url)).resolves.toEqual({ status: 200, text: body });
    expect(takeArrivedEarlyAnswer(url)).toBeUndefined();
    const arrived = (globals.window as Record<string, Record<string, unknown> | undefined>).__kickdriftEarlyArrived;
    expect(arrived && url in arrived).toBeFalsy();
  });

  it("writes the URL as a string literal that cannot close the script element", () => {
    const script = earlyFetchScript("/api/v1/studios/</script><script>alert(1)</script>/cells?after=0");
    expect(script).not.toContain("</script>");
    expect(script).toContain("\\u003c/script>");
  });

  it("is a no-op on the server (no window): the hook asks itself", () => {
    expect(takeEarlyAnswer(firstCellsUrl("std_1", "swp_1"))).toBeUndefined();
  });
});
