/**
 * The sign-in throttle of brokers in Redis mode (redis-mode.ts): failed MQTT sign-ins counted per
 * user name and per client address in the brokers' Redis, so a guesser gets the same allowance
 * (5 per name, 20 per address) over every broker together — with the in-memory throttle alone each
 * broker gave its own 5. Same rules and the same refusal (CONNACK 5) as `SignInThrottle`; the
 * counting is one Lua script per step, so two brokers checking at once cannot both slip through:
 *
 *  - `begin`: refuse a locked or busy key (an attempt in flight counts as a failure until it ends,
 *    one check of a name at a time over all brokers), else register the attempt in flight;
 *  - `done`: a failure adds one to both keys and locks them beyond the allowance for a time that
 *    doubles (1 s … 60 s); a real success clears the name.
 * The clock is Redis' own (TIME), so brokers on machines whose clocks differ share one lock.
 * An attempt in flight is a member of a sorted set scored by its deadline, so a broker killed in
 * the middle of a check leaves nothing behind for longer than `inFlightTtlMs`.
 *
 * The in-memory throttle runs beside it on every broker and sees every attempt made there, but
 * decides only while Redis does not answer (below); while Redis answers, Redis decides (so a success
 * through broker B clears a name that failed through A). It also keeps the credentials that
 * succeeded on this broker: a rig reconnecting with its right secret passes a lock (they are not
 * copied to Redis).
 *
 * Redis unreachable or slow (no answer within `redisTimeoutMs`): each broker counts alone, as in
 * single-broker mode — a guesser gets 5 tries per broker for the length of the outage instead of 5
 * in all. Chosen over refusing every sign-in: on a lab floor a Redis blip must not lock out every
 * rig that reconnects with its right secret (rigs under stress would buffer telemetry and miss
 * commands, trips included); and the secret is still checked by bcrypt on every attempt. Redis mode
 * stops serving its other shared state in such an outage anyway (redis-mode.ts).
 */
import crypto, { randomBytes } from 'node:crypto';
import Redis from 'ioredis';
import { SIGN_IN_THROTTLE_DEFAULTS, SignInThrottle, type SignInThrottleOptions, type ThrottleVerdict } from './sign-in-throttle';

export interface SharedSignInThrottleOptions extends SignInThrottleOptions {
  /** redis://host:port[/db] — the brokers' Redis. */
  url: string;
  /** A Redis step unanswered this long counts as "Redis unreachable" (default 500 ms). */
  redisTimeoutMs?: number;
  /** An attempt in flight whose broker never ended it is forgotten after this long (default 30 s). */
  inFlightTtlMs?: number;
  /** Key prefix (default `emberlot:mqtt:signin:`). */
  prefix?: string;
}

/** Anything that can gate a sign-in: the in-memory throttle (sync) or this one. */
export interface SignInGate {
  begin(username: string, password: string, address: string): ThrottleVerdict | Promise<ThrottleVerdict>;
  close?(): Promise<void>;
}

/** Redis TIME in milliseconds. */
const NOW = `local t = redis.call('TIME') local now = tonumber(t[1]) * 1000 + math.floor(tonumber(t[2]) / 1000)`;

/**
 * KEYS: name hash, name in-flight set, address hash, address in-flight set.
 * ARGV: known (1/0), free per name, free per address, checks at a time per name, per failed
 * address, base lock ms, attempt token, in-flight ttl ms.
 * Returns {1} (go on) or {0, wait ms, 'name'|'address'}. Mirrors SignInThrottle.begin / waitMs.
 */
const BEGIN = `${NOW}
local known = ARGV[1] == '1'
local freeName, freeAddr = tonumber(ARGV[2]), tonumber(ARGV[3])
local perName, perAddr = tonumber(ARGV[4]), tonumber(ARGV[5])
local base, token, ttl = tonumber(ARGV[6]), ARGV[7], tonumber(ARGV[8])
local function read(h, f)
  redis.call('ZREMRANGEBYSCORE', f, '-inf', now)
  return tonumber(redis.call('HGET', h, 'failures') or '0'), tonumber(redis.call('HGET', h, 'lockedUntil') or '0'), redis.call('ZCARD', f)
end
local function wait(failures, locked, inflight, free, busy, counts)
  if locked > now then return locked - now end
  if inflight == 0 then return 0 end
  local pending = 0
  if counts then pending = inflight end
  if busy or failures + pending >= free then return base end
  return 0
end
if not known then
  local nf, nl, ni = read(KEYS[1], KEYS[2])
  local af, al, ai = read(KEYS[3], KEYS[4])
  local nameWait = wait(nf, nl, ni, freeName, ni >= perName, true)
  local addrFailed = af > 0
  local addrWait = wait(af, al, ai, freeAddr, addrFailed and ai >= perAddr, addrFailed)
  if nameWait > 0 or addrWait > 0 then
    if nameWait >= addrWait then return {0, math.floor(nameWait), 'name'} end
    return {0, math.floor(addrWait), 'address'}
  end
end
for _, f in ipairs({KEYS[2], KEYS[4]}) do
  redis.call('ZADD', f, now + ttl, token)
  redis.call('PEXPIRE', f, ttl)
end
return {1}`;

/**
 * KEYS as BEGIN. ARGV: outcome ('ok'|'fail'|'none'), known (1/0), token, free per name, free per
 * address, base lock ms, max lock ms, forget after ms. Mirrors SignInThrottle's done / fail.
 */
const DONE = `${NOW}
local outcome, known, token = ARGV[1], ARGV[2] == '1', ARGV[3]
local freeName, freeAddr = tonumber(ARGV[4]), tonumber(ARGV[5])
local base, maxLock, forget = tonumber(ARGV[6]), tonumber(ARGV[7]), tonumber(ARGV[8])
redis.call('ZREM', KEYS[2], token)
redis.call('ZREM', KEYS[4], token)
local function fail(h, free)
  local n = redis.call('HINCRBY', h, 'failures', 1)
  local locked = tonumber(redis.call('HGET', h, 'lockedUntil') or '0')
  local beyond = n - free
  if beyond >= 0 then
    local lock = now + math.min(maxLock, base * 2 ^ math.min(beyond, 30))
    if lock > locked then locked = math.floor(lock) end
  end
  redis.call('HSET', h, 'lockedUntil', locked, 'lastFailureAt', now)
  redis.call('PEXPIRE', h, math.floor(math.max(forget, locked - now)))
end
if outcome == 'ok' and not known then redis.call('DEL', KEYS[1]) end
if outcome == 'fail' then
  fail(KEYS[1], freeName)
  fail(KEYS[3], freeAddr)
end
return 1`;

const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest('hex');

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const t = setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms);
    p.then(
      (v) => (clearTimeout(t), resolve(v)),
      (e: unknown) => (clearTimeout(t), reject(e instanceof Error ? e : new Error(String(e)))),
    );
  });
}

export class SharedSignInThrottle implements SignInGate {
  private readonly local: SignInThrottle;
  private readonly redis: Redis;
  private readonly limits: {
    freeName: number;
    freeAddr: number;
    perName: number;
    perAddr: number;
    baseLockMs: number;
    maxLockMs: number;
    forgetAfterMs: number;
    ttl: number;
    timeoutMs: number;
  };
  private readonly prefix: string;
  private readonly boot = randomBytes(4).toString('hex');
  private counter = 0;
  private degraded = false;
  /** Sign-ins gated by this broker's own counts because Redis did not answer (counter). */
  fallbacks = 0;

  constructor(
    opts: SharedSignInThrottleOptions,
    private readonly log: (line: string) => void = () => undefined,
  ) {
    this.local = new SignInThrottle(opts);
    this.limits = {
      freeName: opts.freeFailuresPerName ?? SIGN_IN_THROTTLE_DEFAULTS.freeFailuresPerName,
      freeAddr: opts.freeFailuresPerAddress ?? SIGN_IN_THROTTLE_DEFAULTS.freeFailuresPerAddress,
      perName: opts.checksInFlightPerName ?? SIGN_IN_THROTTLE_DEFAULTS.checksInFlightPerName,
      perAddr: opts.checksInFlightAfterFailurePerAddress ?? SIGN_IN_THROTTLE_DEFAULTS.checksInFlightAfterFailurePerAddress,
      baseLockMs: opts.baseLockMs ?? SIGN_IN_THROTTLE_DEFAULTS.baseLockMs,
      maxLockMs: opts.maxLockMs ?? SIGN_IN_THROTTLE_DEFAULTS.maxLockMs,
      forgetAfterMs: opts.forgetAfterMs ?? SIGN_IN_THROTTLE_DEFAULTS.forgetAfterMs,
      ttl: opts.inFlightTtlMs ?? 30_000,
      timeoutMs: opts.redisTimeoutMs ?? 500,
    };
    this.prefix = opts.prefix ?? 'emberlot:mqtt:signin:';
    // No offline queue: while Redis is away a step fails at once and the broker counts alone,
    // instead of holding every CONNECT until Redis returns.
    this.redis = new Redis(opts.url, { enableOfflineQueue: false, maxRetriesPerRequest: 1, connectTimeout: 2_000 });
    this.redis.on('error', () => undefined); // reported through `outage` when a step fails
  }

  async begin(username: string, password: string, address: string): Promise<ThrottleVerdict> {
    // Always asked, so its counts are warm if Redis goes away; its verdict counts only then.
    const local = this.local.begin(username, password, address);
    const known = this.local.knows(username, password) ? '1' : '0';
    const keys = this.keys(username, address);
    const token = `${this.boot}-${++this.counter}`;
    const l = this.limits;
    let answer: unknown;
    try {
      answer = await withTimeout(
        this.redis.eval(BEGIN, 4, ...keys, known, l.freeName, l.freeAddr, l.perName, l.perAddr, l.baseLockMs, token, l.ttl),
        l.timeoutMs,
      );
      this.recovered();
    } catch (err) {
      this.outage(err);
      return local; // Redis unreachable: this broker's own counts decide (see the header)
    }
    if (Array.isArray(answer) && answer[0] === 0) {
      if (local.ok) local.done(null); // nothing learnt here; the attempt is no longer in flight
      return { ok: false, retryAfterMs: Number(answer[1]) || l.baseLockMs, key: answer[2] === 'address' ? 'address' : 'name' };
    }
    let settled = false;
    return {
      ok: true,
      done: (success) => {
        if (settled) return;
        settled = true;
        if (local.ok) local.done(success);
        const outcome = success === null ? 'none' : success ? 'ok' : 'fail';
        withTimeout(
          this.redis.eval(DONE, 4, ...keys, outcome, known, token, l.freeName, l.freeAddr, l.baseLockMs, l.maxLockMs, l.forgetAfterMs),
          l.timeoutMs,
        ).then(
          () => this.recovered(),
          (err: unknown) => this.outage(err), // the attempt's in-flight entry expires on its own
        );
      },
    };
  }

  async close(): Promise<void> {
    await this.redis.quit().catch(() => this.redis.disconnect());
  }

  private keys(username: string, address: string): [string, string, string, string] {
    // Hashed: a user name is up to 64 KB of whatever a client sends.
    const n = `${this.prefix}n:${sha256(username)}`;
    const a = `${this.prefix}a:${sha256(address)}`;
    return [n, `${n}:flight`, a, `${a}:flight`];
  }

  private outage(err: unknown): void {
    this.fallbacks++;
    if (this.degraded) return;
    this.degraded = true;
    this.log(
      `redis sign-in throttle: no answer (${err instanceof Error ? err.message : String(err)}); counting failed sign-ins on this broker alone until it answers`,
    );
  }

  private recovered(): void {
    if (!this.degraded) return;
    this.degraded = false;
    this.log('redis sign-in throttle: answering again; failed sign-ins are counted over all brokers');
  }
}
