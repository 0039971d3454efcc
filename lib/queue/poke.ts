import "server-only";

/**
 * Wakes the process's queue runner after a submit, without importing the runner: route handlers
 * that import this do not pull the worker pool into their bundle.
 */
export const RUNNER_KEY = Symbol.for("kickdrift.queueRunner");

export function pokeProcessRunner(): void {
  const runner = (globalThis as { [RUNNER_KEY]?: { poke(): void } })[RUNNER_KEY];
  runner?.poke();
}
