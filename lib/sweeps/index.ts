/**
 * The sweep domain, browser-safe part: spec schema and parameter table, grid
 * expansion, chunking, cost model, result formats. Server-only modules are
 * imported by path: ./hash (node:crypto), ./pool and ./run (worker threads),
 * ./chunk-task (the worker's loop).
 */
export * from "./spec";
export * from "./parameters";
export * from "./grid";
export * from "./chunks";
export * from "./cost";
export * from "./results";
export { canonicalJson, hash32 } from "./canonical";
