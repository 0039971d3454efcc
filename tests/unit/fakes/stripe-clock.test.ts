/**
 * The local Stripe fake's clock (lib/fakes/stripe/store.ts) runs on with real time and moves only
 * forward. Advancing it to a period boundary and then invoicing that period takes time; a second
 * that ticks meanwhile put the clock past the target, and the final "advance to the target" used to
 * throw "only moves forward" (seen once, on a loaded machine, in the billing documents test).
 */
import { describe, expect, it } from "vitest";
import { StripeFakeStore } from "@/lib/fakes/stripe/store";

describe("the Stripe fake's clock", () => {
  it("moves forward to a later time", () => {
    const store = new StripeFakeStore();
    const target = store.now() + 30 * 86_400;
    store.advanceClockTo(target);
    expect(store.now() - target).toBeGreaterThanOrEqual(0);
    expect(store.now() - target).toBeLessThan(5);
  });

  it("stays where it is when asked for a time it has already passed, and never moves back", () => {
    const store = new StripeFakeStore();
    store.advanceClockTo(store.now() + 86_400);
    const before = store.now();
    expect(() => store.advanceClockTo(before - 3_600)).not.toThrow();
    expect(store.now()).toBeGreaterThanOrEqual(before);
    expect(store.now() - before).toBeLessThan(5);
  });
});
