/** One numbering everywhere: reasons stored with the engine's 0-based indices read from 1 on the pages. */
import { describe, expect, it } from "vitest";
import { reasonForDisplay } from "@/lib/ui/reasons";

describe("reasons as a user counts", () => {
  it("counts discs and walls from 1 and leaves every other number alone", () => {
    expect(reasonForDisplay("disc 0 crossed wall 2")).toBe("disc 1 crossed wall 3");
    expect(reasonForDisplay("disc 3 and disc 12 passed each other within one step without touching")).toBe("disc 4 and disc 13 passed each other within one step without touching");
    expect(reasonForDisplay("energy changed +0.4%, overlap up to 3% of the smaller radius, ω·h up to 0.8")).toBe("energy changed +0.4%, overlap up to 3% of the smaller radius, ω·h up to 0.8");
    expect(reasonForDisplay(null)).toBeNull();
  });
});
