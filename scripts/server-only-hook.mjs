// Plain Node (tsx scripts, the worker process, benches, test children) runs server modules outside Next.
// Those modules start with `import "server-only"`, whose package throws under Node's default conditions:
// only a React server bundle may load it. Next resolves the marker itself (an empty module in route
// handlers, server components, instrumentation and the proxy; a build error in client components) and
// never loads this file. Here one resolve hook answers that one specifier as the package's own
// `react-server` export (its empty module); every other import resolves as before, so react-dom/server
// and the rest keep Node's default conditions (a process-wide `--conditions=react-server` would not).
// Use: `node --import tsx --import ./scripts/server-only-hook.mjs FILE.ts`, `tsx --import ./scripts/server-only-hook.mjs FILE.ts`.
import { register } from "node:module";

register("./server-only-resolve.mjs", import.meta.url);
