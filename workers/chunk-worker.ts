/**
 * Worker-thread entry of the chunk pool (piscina calls the default export).
 * Loaded as TypeScript under tsx from the command line, and as the esbuild
 * bundle .build/chunk-worker.mjs (scripts/build-worker.mjs) under `next start`.
 */
import { runChunkTask, type ChunkOutcome, type ChunkTask } from "../lib/sweeps/chunk-task";

export default function runChunk(task: ChunkTask): ChunkOutcome {
  return runChunkTask(task);
}
