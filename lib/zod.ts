/**
 * zod, configured once before any schema is built: every module that defines a schema imports `z`
 * from here, so this runs first (ES modules evaluate their imports before their own body).
 *
 * In the browser zod runs "jitless": its fast path compiles parsers with `new Function`, and even
 * the probe for that (caught by zod) is reported as a violation of our Content-Security-Policy,
 * which allows no eval (proxy.ts, lib/security/headers.ts). On the server the fast path stays on.
 */
import { z } from "zod";

if (typeof window !== "undefined") z.config({ jitless: true });

export { z };
