/**
 * Failed MQTT sign-ins, throttled per user name and per client address. A rig's secret is checked
 * with bcrypt (deliberately slow, ~0.1 s of CPU in pure JS), so a storm of wrong passwords for one
 * rig name once queued 10 s of hashing ahead of every other rig's connect (a legitimate connect
 * took 14.8 s). Here each key (name or address) gets a few free failures; after that it is locked
 * for a delay that doubles with every further failure, up to a cap, and a locked key's attempts
 * are refused at once, before any database read or hash. Attempts in flight count as failures
 * until they succeed, and one name is checked once at a time, so a burst of simultaneous connects
 * cannot slip past the allowance or queue hashes side by side.
 *
 * Credentials that succeeded before (kept as a hash, bounded) pass even a locked key: a rig
 * reconnecting with its right secret is never slowed by someone guessing its name. A rig whose
 * credentials have not succeeded since the broker started waits out the lock (at most `maxLockMs`).
 * Refusals of a locked key cost nothing and do not extend the lock.
 */
import crypto from 'node:crypto';

export interface SignInThrottleOptions {
  /** Failures (and attempts in flight) a user name may have before it is locked (default 5). */
  freeFailuresPerName?: number;
  /** The same for one client address, over all names (default 20). */
  freeFailuresPerAddress?: number;
  /** First lock; doubles with every failure beyond the allowance (default 1 s). */
  baseLockMs?: number;
  /** Longest lock (default 60 s). */
  maxLockMs?: number;
  /**
   * Checks of one name at a time (default 1: a rig signs in once at a time); the rest are refused
   * for a moment. A storm's guesses then cost one bcrypt after another, never a burst at once.
   */
  checksInFlightPerName?: number;
  /** Once an address has failed, its checks at a time (default 2); before that, no limit (many rigs behind one NAT). */
  checksInFlightAfterFailurePerAddress?: number;
  /** A key with no failure for this long is forgotten (default 15 min). */
  forgetAfterMs?: number;
  /** Keys and remembered credentials kept at most (oldest dropped first; default 10,000 each). */
  maxEntries?: number;
  now?: () => number;
}

interface Entry {
  failures: number;
  inFlight: number;
  lockedUntil: number;
  lastFailureAt: number;
}

/** `done(null)`: the check could not be made (e.g. database down), neither failure nor success. */
export type ThrottleVerdict =
  { ok: true; done: (success: boolean | null) => void } | { ok: false; retryAfterMs: number; key: 'name' | 'address' };

const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest('hex');

/** The throttle's limits, declared once for the single broker and the shared (Redis) form. */
export const SIGN_IN_THROTTLE_DEFAULTS = {
  freeFailuresPerName: 5,
  freeFailuresPerAddress: 20,
  baseLockMs: 1_000,
  maxLockMs: 60_000,
  checksInFlightPerName: 1,
  checksInFlightAfterFailurePerAddress: 2,
  forgetAfterMs: 15 * 60_000,
} as const;

export class SignInThrottle {
  private readonly entries = new Map<string, Entry>();
  private readonly knownGood = new Map<string, true>();
  private readonly o: Required<Omit<SignInThrottleOptions, 'now'>>;
  private readonly now: () => number;

  constructor(opts: SignInThrottleOptions = {}) {
    this.o = {
      freeFailuresPerName: opts.freeFailuresPerName ?? SIGN_IN_THROTTLE_DEFAULTS.freeFailuresPerName,
      freeFailuresPerAddress: opts.freeFailuresPerAddress ?? SIGN_IN_THROTTLE_DEFAULTS.freeFailuresPerAddress,
      baseLockMs: opts.baseLockMs ?? SIGN_IN_THROTTLE_DEFAULTS.baseLockMs,
      maxLockMs: opts.maxLockMs ?? SIGN_IN_THROTTLE_DEFAULTS.maxLockMs,
      checksInFlightPerName: opts.checksInFlightPerName ?? SIGN_IN_THROTTLE_DEFAULTS.checksInFlightPerName,
      checksInFlightAfterFailurePerAddress:
        opts.checksInFlightAfterFailurePerAddress ?? SIGN_IN_THROTTLE_DEFAULTS.checksInFlightAfterFailurePerAddress,
      forgetAfterMs: opts.forgetAfterMs ?? SIGN_IN_THROTTLE_DEFAULTS.forgetAfterMs,
      maxEntries: opts.maxEntries ?? 10_000,
    };
    this.now = opts.now ?? Date.now;
  }

  /**
   * Before checking credentials: refuse at once when the name or the address is locked (unless
   * these exact credentials succeeded before); otherwise call `done(success)` when the check ends.
   */
  begin(username: string, password: string, address: string): ThrottleVerdict {
    const now = this.now();
    const nameKey = `n:${username}`;
    const addrKey = `a:${address}`;
    const name = this.entry(nameKey, now);
    const addr = this.entry(addrKey, now);
    const credKey = sha256(`${username}\0${password}`);
    const known = this.knownGood.has(credKey);
    if (!known) {
      const nameWait = this.waitMs(name, this.o.freeFailuresPerName, name.inFlight >= this.o.checksInFlightPerName, true, now);
      // An address with no failure is many rigs behind one gateway reconnecting at once (after a
      // broker restart): their checks in flight are not failures, or the 21st rig would be refused.
      const addrFailed = addr.failures > 0;
      const addrWait = this.waitMs(
        addr,
        this.o.freeFailuresPerAddress,
        addrFailed && addr.inFlight >= this.o.checksInFlightAfterFailurePerAddress,
        addrFailed,
        now,
      );
      if (nameWait > 0 || addrWait > 0) {
        return nameWait >= addrWait
          ? { ok: false, retryAfterMs: nameWait, key: 'name' }
          : { ok: false, retryAfterMs: addrWait, key: 'address' };
      }
    }
    name.inFlight++;
    addr.inFlight++;
    let settled = false;
    return {
      ok: true,
      done: (success) => {
        if (settled) return;
        settled = true;
        name.inFlight--;
        addr.inFlight--;
        const at = this.now();
        if (success === null) {
          /* nothing learnt */
        } else if (success) {
          // A real check that succeeded clears the name; known credentials passing a lock do not
          // lift it for the guesser.
          if (!known) {
            name.failures = 0;
            name.lockedUntil = 0;
          }
          this.remember(credKey);
        } else {
          this.fail(name, this.o.freeFailuresPerName, at);
          this.fail(addr, this.o.freeFailuresPerAddress, at);
        }
        this.touch(nameKey, name);
        this.touch(addrKey, addr);
      },
    };
  }

  /** Whether these exact credentials succeeded here before (they pass a locked key). */
  knows(username: string, password: string): boolean {
    return this.knownGood.has(sha256(`${username}\0${password}`));
  }

  /** Keys currently tracked (tests, counters). */
  get size(): number {
    return this.entries.size;
  }

  private entry(key: string, now: number): Entry {
    let e = this.entries.get(key);
    if (e && e.inFlight === 0 && now - e.lastFailureAt > this.o.forgetAfterMs && now >= e.lockedUntil) {
      this.entries.delete(key);
      e = undefined;
    }
    if (!e) {
      e = { failures: 0, inFlight: 0, lockedUntil: 0, lastFailureAt: 0 };
      this.touch(key, e);
    }
    return e;
  }

  /** Milliseconds until this key may try again (0 = now). */
  private waitMs(e: Entry, free: number, busy: boolean, inFlightCounts: boolean, now: number): number {
    if (e.lockedUntil > now) return e.lockedUntil - now;
    if (e.inFlight === 0) return 0;
    // Attempts still being checked count as failures until they succeed (where `inFlightCounts`).
    return busy || e.failures + (inFlightCounts ? e.inFlight : 0) >= free ? this.o.baseLockMs : 0;
  }

  private fail(e: Entry, free: number, at: number): void {
    e.failures++;
    e.lastFailureAt = at;
    const beyond = e.failures - free;
    if (beyond >= 0)
      e.lockedUntil = Math.max(e.lockedUntil, at + Math.min(this.o.maxLockMs, this.o.baseLockMs * 2 ** Math.min(beyond, 30)));
  }

  /** Map order = recency; the oldest key goes when the map is full. */
  private touch(key: string, e: Entry): void {
    this.entries.delete(key);
    this.entries.set(key, e);
    if (this.entries.size > this.o.maxEntries) {
      for (const [k, v] of this.entries) {
        if (v.inFlight === 0) {
          this.entries.delete(k);
          break;
        }
      }
    }
  }

  private remember(credKey: string): void {
    this.knownGood.delete(credKey);
    this.knownGood.set(credKey, true);
    if (this.knownGood.size > this.o.maxEntries) this.knownGood.delete(this.knownGood.keys().next().value as string);
  }
}
