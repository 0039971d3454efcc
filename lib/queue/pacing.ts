import "server-only";

/**
 * When a runner's loop does what. The loop claims when there is room and the queue was not just
 * found drained; cancel checks run once per poll interval, lease checks at most once a second, the
 * run limits before the next claim when a chunk landed near a limit, else every LIMITS_EVERY_MS —
 * not after every chunk, as each statement is main-thread work that adds to a sweep's wall time.
 * Times are Date.now() milliseconds.
 */

/**
 * Longest wait between two checks of the run limits while chunks land far from every limit (ms):
 * a top-up, a raise or a suspension takes effect within it. (One check reads every studio's
 * standing: ~50 ms of main-thread work on PGlite, which at 250 ms cost a 65,536-cell sweep a
 * quarter of its wall time.)
 */
const LIMITS_EVERY_MS = 1_000;
/** Shortest wait between two looks for lapsed leases (ms). */
const LEASE_CHECK_EVERY_MS = 1_000;

export class Pacing {
  private nextHousekeeping = 0;
  private nextLeaseCheck = 0;
  private limitsCheckedAt = 0;
  /** A chunk landed near a limit (its debit went the careful way): check the limits before the next claim. */
  private nearLimit = true;
  /**
   * The last claim found fewer chunks than it asked for: until a poke (a submit, a resume) or the
   * next poll, a landing chunk does not trigger another claim that would find nothing.
   */
  private drainedUntil = 0;
  /** Set by drained(), cleared by undrain(): the queue had nothing more at the last claim. */
  private wasDrained = false;

  constructor(private readonly pollMs: number) {}

  /** Whether the cancel check is due (then it is booked for the next poll interval). */
  housekeepingDue(): boolean {
    if (Date.now() < this.nextHousekeeping) return false;
    this.nextHousekeeping = Date.now() + this.pollMs;
    return true;
  }

  /** Lapsed leases were just looked for (at start): the next look is a full interval away. */
  leasesChecked(): void {
    this.nextLeaseCheck = Date.now() + Math.max(this.pollMs, LEASE_CHECK_EVERY_MS);
  }

  /** Whether the look for lapsed leases is due (then it is booked). */
  leaseCheckDue(): boolean {
    if (Date.now() < this.nextLeaseCheck) return false;
    this.nextLeaseCheck = Date.now() + Math.max(this.pollMs, LEASE_CHECK_EVERY_MS);
    return true;
  }

  /** Whether the run limits are due (then they count as checked now). */
  limitsDue(): boolean {
    if (!this.nearLimit && Date.now() - this.limitsCheckedAt < LIMITS_EVERY_MS) return false;
    this.nearLimit = false;
    this.limitsCheckedAt = Date.now();
    return true;
  }

  landedNearLimit(): void {
    this.nearLimit = true;
  }

  /** The queue had fewer chunks than asked for: no claim until the next poll or a poke. */
  drained(): void {
    this.drainedUntil = Date.now() + this.pollMs;
    this.wasDrained = true;
  }

  /** Something was queued or resumed: claim at the next turn. */
  undrain(): void {
    this.drainedUntil = 0;
    this.wasDrained = false;
  }

  /**
   * Whether the loop may claim now. After a claim that drained the queue it looks again at the next
   * poll, but only while some pool thread could be left without a chunk (`everyThreadFed` false):
   * while every thread still has a chunk to run, a claim can only find work that would wait behind
   * them, and each claim that finds nothing is main-thread work taken from the threads (measured on
   * a box sweep: a claim every poll was about a third of the runner's statements while it ran). The
   * loop asks again as soon as a finished chunk is recorded, as it did before.
   */
  mayClaim(everyThreadFed: boolean): boolean {
    if (this.wasDrained && everyThreadFed) return false;
    return Date.now() >= this.drainedUntil;
  }

  /** How long the loop may sleep before its next housekeeping (ms, 1 to pollMs). */
  get sleepMs(): number {
    return Math.max(1, Math.min(this.pollMs, this.nextHousekeeping - Date.now()));
  }
}

/** Wakes a sleeping loop early; a wake-up that comes while it works is kept for its next turn. */
export class Wakeup {
  private rung = false;
  private wake: (() => void) | null = null;

  ring(): void {
    this.rung = true;
    this.wake?.();
  }

  /** At the start of a turn: forget earlier rings. */
  clear(): void {
    this.rung = false;
  }

  /** Whether a ring came since clear(). */
  get pending(): boolean {
    return this.rung;
  }

  /** Sleep `ms`, or until rung. */
  async sleep(ms: number): Promise<void> {
    await new Promise<void>((resolve) => {
      const timer = setTimeout(resolve, ms);
      this.wake = () => {
        clearTimeout(timer);
        resolve();
      };
    });
    this.wake = null;
  }
}
