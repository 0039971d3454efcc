import "server-only";

/**
 * Work a handler starts after it has decided its answer, so the answer's timing does not depend
 * on what the work does (a mail sent to an address that exists takes longer than none). The
 * work runs on the same process once the current tick ends; failures are logged, never thrown
 * at the caller. Tests wait for it with `settleAfterResponse()`.
 */
const pending = new Set<Promise<void>>();
let gate: Promise<void> | null = null;

export function afterResponse(label: string, work: () => Promise<unknown>): void {
  const held = gate;
  const run = (async () => {
    // Let the caller's answer leave first (and, in tests, wait while a gate is held).
    await new Promise<void>((resolve) => setImmediate(resolve));
    if (held) await held;
    await work();
  })()
    .catch((error) => console.error(`[after-response] ${label} failed`, error))
    .then(() => undefined);
  pending.add(run);
  void run.finally(() => pending.delete(run));
}

/** Resolves when all work started so far (and any it started) has finished. */
export async function settleAfterResponse(): Promise<void> {
  while (pending.size > 0) await Promise.all([...pending]);
}

/** Tests: work started from now on waits until the returned release is called. */
export function holdAfterResponse(): () => void {
  let release!: () => void;
  gate = new Promise<void>((resolve) => (release = resolve));
  return () => {
    gate = null;
    release();
  };
}
