import "server-only";

/**
 * Work a server process does when someone signs in, registered at start-up (the demo's watch sweep,
 * server/startup.ts). Kept on globalThis under a shared symbol: the start-up code and the auth route
 * may be bundled as separate module instances, and both must see the one list.
 */
const HOOKS_KEY = Symbol.for("kickdrift.signInHooks");

export type SignInHook = (userId: string) => Promise<void>;

function hooks(): SignInHook[] {
  const holder = globalThis as { [HOOKS_KEY]?: SignInHook[] };
  holder[HOOKS_KEY] ??= [];
  return holder[HOOKS_KEY];
}

/** Adds a hook run after every sign-in; returns a function that removes it. */
export function addSignInHook(hook: SignInHook): () => void {
  hooks().push(hook);
  return () => {
    const list = hooks();
    const at = list.indexOf(hook);
    if (at >= 0) list.splice(at, 1);
  };
}

/** Runs the hooks in order; a failing hook is logged and never fails the sign-in. */
export async function runSignInHooks(userId: string): Promise<void> {
  for (const hook of [...hooks()]) {
    try {
      await hook(userId);
    } catch (error) {
      console.error(`[kickdrift] sign-in hook failed: ${(error as Error).message}`);
    }
  }
}
