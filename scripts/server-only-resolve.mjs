// The resolve hook registered by scripts/server-only-hook.mjs (it runs on Node's hooks thread):
// `server-only` resolves through its own package's `react-server` export, everything else is untouched.
export async function resolve(specifier, context, nextResolve) {
  if (specifier === "server-only") {
    return nextResolve(specifier, { ...context, conditions: [...context.conditions, "react-server"] });
  }
  return nextResolve(specifier, context);
}
