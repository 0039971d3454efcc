// drizzle-kit loads drizzle.config.ts and then db/schema.ts with require() (esbuild-register) in plain
// Node, where the schema's `import "server-only"` marker would throw (its package's default export).
// Node 20 has no resolve hooks for require(), so this file, loaded by drizzle.config.ts before the
// schema, answers that one request with the package's own empty module (its `react-server` export);
// every other request resolves as before. Next never loads drizzle.config.ts or this file.
/** node:module's Module class (the constructor of this very module object). */
const Module = module.constructor;
/** The package's `react-server` export, beside the default one (index.js) that require() resolves to. */
const emptyMarker = require.resolve("server-only").replace(/index[.]js$/, "empty.js");
const resolveFilename = Module._resolveFilename;
Module._resolveFilename = function resolveServerOnly(request, ...rest) {
  return request === "server-only" ? emptyMarker : resolveFilename.call(this, request, ...rest);
};
