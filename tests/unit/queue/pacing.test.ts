/**
 * When the queue runner's loop claims (lib/queue/pacing.ts): after a claim that drained the queue it
 * looks again at the next poll only while a pool thread could be left without a chunk, and at once
 * after a poke. The clock is Vitest's fake one, started from the real time: only its steps matter.
 */
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { Pacing } from "@/lib/queue/pacing";

const POLL_MS = 250;

beforeEach(() => {
  vi.useFakeTimers({ now: Date.now(), toFake: ["Date"] });
});
afterEach(() => {
  vi.useRealTimers();
});

describe("queue runner pacing", () => {
  it("claims at once until the queue is found drained", () => {
    const pacing = new Pacing(POLL_MS);
    expect(pacing.mayClaim(true)).toBe(true);
    expect(pacing.mayClaim(false)).toBe(true);
  });

  it("after a drained claim, looks again at the next poll only while some thread could be left without a chunk", () => {
    const pacing = new Pacing(POLL_MS);
    pacing.drained();
    // Within the poll interval: no claim either way (a landing chunk would find nothing).
    expect(pacing.mayClaim(false)).toBe(false);
    expect(pacing.mayClaim(true)).toBe(false);
    vi.advanceTimersByTime(POLL_MS);
    // Past it: a claim only when a thread could go idle; while every thread has a chunk, none.
    expect(pacing.mayClaim(false)).toBe(true);
    expect(pacing.mayClaim(true)).toBe(false);
    vi.advanceTimersByTime(100 * POLL_MS);
    expect(pacing.mayClaim(true)).toBe(false);
    expect(pacing.mayClaim(false)).toBe(true);
  });

  it("a poke (a submit, a resume) lets the next turn claim whatever the threads hold", () => {
    const pacing = new Pacing(POLL_MS);
    pacing.drained();
    pacing.undrain();
    expect(pacing.mayClaim(true)).toBe(true);
    expect(pacing.mayClaim(false)).toBe(true);
  });

  it("books the lease check that start() has just made a full interval ahead", () => {
    const pacing = new Pacing(POLL_MS);
    pacing.leasesChecked();
    expect(pacing.leaseCheckDue()).toBe(false);
    // LEASE_CHECK_EVERY_MS is 1 s (longer than the poll here).
    vi.advanceTimersByTime(999);
    expect(pacing.leaseCheckDue()).toBe(false);
    vi.advanceTimersByTime(1);
    expect(pacing.leaseCheckDue()).toBe(true);
    expect(pacing.leaseCheckDue()).toBe(false);
  });
});
