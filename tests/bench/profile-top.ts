/**
 * Top functions by self time of a V8 .cpuprofile (`npx tsx tests/bench/profile-top.ts FILE [n]`).
 */
import { readFileSync } from "node:fs";

interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string; lineNumber: number };
}
interface Profile {
  nodes: ProfileNode[];
  samples: number[];
  timeDeltas: number[];
}

const profile = JSON.parse(readFileSync(process.argv[2], "utf8")) as Profile;
const limit = Number(process.argv[3] ?? 12);
const byId = new Map(profile.nodes.map((node) => [node.id, node]));
const selfUs = new Map<string, number>();
let totalUs = 0;
profile.samples.forEach((id, index) => {
  const node = byId.get(id);
  if (!node) return;
  const frame = node.callFrame;
  const file = frame.url.split("/").slice(-1)[0] || "(native)";
  const key = `${frame.functionName || "(anonymous)"} ${file}:${frame.lineNumber + 1}`;
  const delta = profile.timeDeltas[index] ?? 0;
  selfUs.set(key, (selfUs.get(key) ?? 0) + delta);
  totalUs += delta;
});
const rows = [...selfUs.entries()].sort((a, b) => b[1] - a[1]).slice(0, limit);
for (const [key, us] of rows) console.log(`${((100 * us) / totalUs).toFixed(1).padStart(5)}%  ${(us / 1e3).toFixed(0).padStart(7)} ms  ${key}`);
