// Prints one closing line over every test runner's JSON report: "tests: N passed, N failed, N skipped".
import { existsSync, readFileSync } from "node:fs";

const [vitestPath, playwrightPath] = process.argv.slice(2);
let passed = 0;
let failed = 0;
let skipped = 0;

if (vitestPath && existsSync(vitestPath)) {
  const v = JSON.parse(readFileSync(vitestPath, "utf8"));
  passed += v.numPassedTests ?? 0;
  failed += v.numFailedTests ?? 0;
  skipped += (v.numPendingTests ?? 0) + (v.numTodoTests ?? 0);
}
if (playwrightPath && existsSync(playwrightPath)) {
  const p = JSON.parse(readFileSync(playwrightPath, "utf8"));
  passed += (p.stats?.expected ?? 0) + (p.stats?.flaky ?? 0);
  failed += p.stats?.unexpected ?? 0;
  skipped += p.stats?.skipped ?? 0;
}
console.log(`tests: ${passed} passed, ${failed} failed, ${skipped} skipped`);
if (passed === 0) {
  console.error("No test ran.");
  process.exit(1);
}
process.exit(failed > 0 ? 1 : 0);
