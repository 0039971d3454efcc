/**
 * The snapshot drawn before saving (lib/snapshots/drawing.ts): discs numbered from 1 in file order,
 * every disc inside the view, each wall's surface drawn on its own line, and problems named by disc
 * or wall number and the field in words. Figures are plane geometry worked by hand.
 */
import { describe, expect, it } from "vitest";
import { drawScene, issuePlace, problemPlace } from "@/lib/snapshots/drawing";
import { parseSnapshotValue } from "@/lib/snapshots/format";
import { CRATESLIDE_SNAPSHOT_JSON } from "@/lib/snapshots/demo";

const body = (xM: number, yM: number, vxMPerS = 0, radiusM = 0.5) => ({ xM, yM, vxMPerS, vyMPerS: 0, massKg: 2, radiusM });

describe("the scene drawing", () => {
  it("numbers discs from 1 in file order and keeps every disc inside the view box", () => {
    const drawing = drawScene({ bodies: [body(0, 0, 3), body(4, 1), body(-2, 3)], walls: [] }, 640, 360);
    expect(drawing.discs.map((d) => d.number)).toEqual([1, 2, 3]);
    for (const d of drawing.discs) {
      expect(d.cx - d.r).toBeGreaterThanOrEqual(0);
      expect(d.cx + d.r).toBeLessThanOrEqual(640);
      expect(d.cy - d.r).toBeGreaterThanOrEqual(0);
      expect(d.cy + d.r).toBeLessThanOrEqual(360);
    }
    // y grows upwards in the scene, downwards on screen: disc 3 (y = 3 m) is drawn above disc 1 (y = 0).
    expect(drawing.discs[2].cy).toBeLessThan(drawing.discs[0].cy);
    // Same scale both ways: radius 0.5 m is 0.5 / metresPerPixel px (to the 0.01 px the drawing rounds to).
    expect(drawing.discs[0].r).toBeCloseTo(0.5 / drawing.metresPerPixel, 1);
    // Only the moving disc has an arrow, pointing along +x (to the right).
    expect(drawing.discs[1].arrow).toBeNull();
    expect(drawing.discs[0].arrow!.y).toBeCloseTo(drawing.discs[0].cy, 1);
    expect(drawing.discs[0].arrow!.x).toBeGreaterThan(drawing.discs[0].cx);
    expect(drawing.discs[0].title).toBe("Disc 1: 2 kg, radius 0.5 m, at (0, 0) m, moving 3 m/s");
  });

  it("draws each wall's surface inside the view, even a wall away from the discs", () => {
    // Floor y = 0 (normal +y), and a wall x = 10 far to the right (normal −x: −x ≥ −10).
    const drawing = drawScene(
      {
        bodies: [body(0, 1), body(2, 1)],
        walls: [
          { normalX: 0, normalY: 1, offsetM: 0 },
          { normalX: -1, normalY: 0, offsetM: -10 },
        ],
      },
      640,
      360,
    );
    expect(drawing.walls.map((w) => w.number)).toEqual([1, 2]);
    expect(drawing.wallsOutside).toEqual([]);
    const [floor, right] = drawing.walls;
    // The floor is horizontal on screen and below both discs; the right wall is vertical and right of them.
    expect(floor.y1).toBeCloseTo(floor.y2, 5);
    expect(floor.y1).toBeGreaterThan(drawing.discs[0].cy);
    expect(right.x1).toBeCloseTo(right.x2, 5);
    expect(right.x1).toBeGreaterThan(drawing.discs[1].cx);
    for (const w of drawing.walls) {
      for (const v of [w.x1, w.x2]) {
        expect(v).toBeGreaterThanOrEqual(-0.01);
        expect(v).toBeLessThanOrEqual(640.01);
      }
    }
  });

  it("labels the demo loading bay's 41 discs on the discs themselves", () => {
    const parsed = parseSnapshotValue(JSON.parse(CRATESLIDE_SNAPSHOT_JSON));
    if (!parsed.ok) throw new Error("demo snapshot should be valid");
    const drawing = drawScene(parsed.snapshot, 640, 360);
    expect(drawing.discs).toHaveLength(41);
    expect(drawing.walls).toHaveLength(4);
    expect(drawing.discs.at(-1)!.number).toBe(41);
    expect(drawing.labelled).toBe(true);
    // Past 80 discs the numbers move to the tooltips.
    const many = Array.from({ length: 81 }, (_, i) => body(i * 2, 0));
    expect(drawScene({ bodies: many, walls: [] }, 640, 360).labelled).toBe(false);
  });
});

describe("problem places in words", () => {
  it("names the disc or wall as users count and the field in words", () => {
    expect(problemPlace("bodies.2.massKg")).toBe("Disc 3, mass (massKg)");
    expect(problemPlace("bodies.0")).toBe("Disc 1");
    expect(problemPlace("walls.1.offsetM")).toBe("Wall 2, offset (offsetM)");
    expect(problemPlace("bodies.4.colour")).toBe("Disc 5, colour");
    expect(problemPlace("gravityMPerS2")).toBe("Gravity (gravityMPerS2)");
    expect(problemPlace("(file)")).toBe("File");
    expect(problemPlace("bodies")).toBe("Discs");
  });

  it("names the places of the server's issues (their fields are the API's paths under file.) the same way", () => {
    expect(issuePlace("file.bodies.0.massKg")).toBe("Disc 1, mass (massKg)");
    expect(issuePlace("file.walls.3")).toBe("Wall 4");
    expect(issuePlace("file.gravityMPerS2")).toBe("Gravity (gravityMPerS2)");
    expect(issuePlace("file")).toBe("File");
    expect(issuePlace("name")).toBe("Snapshot name");
  });

  it("an upload's problems read with the same numbers as the overlap message", () => {
    const result = parseSnapshotValue({ bodies: [body(0, 0), body(5, 0), body(5.2, 0)] });
    expect(result.ok).toBe(false);
    const problems = result.ok ? [] : result.problems;
    // Discs 2 and 3 (file positions 1 and 2) are 0.2 m apart with radii 0.5 m: 0.8 m of overlap, 160 % of a radius.
    expect(problems.map((p) => `${problemPlace(p.path)}: ${p.reason}`)).toEqual(["Disc 2: discs 2 and 3 start overlapping by 160% of the smaller radius (tolerance 1%)"]);
  });
});
