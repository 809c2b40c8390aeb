/** Small HTTP helpers for the bench: sign in for a session cookie, timed GETs over keep-alive. */
import * as http from 'node:http';

const agent = new http.Agent({ keepAlive: true, maxSockets: 4 });

export interface HttpResult {
  status: number;
  ms: number;
  body: string;
  headers: http.IncomingHttpHeaders;
}

export function request(
  method: string,
  url: string,
  opts: { cookie?: string; json?: unknown; timeoutMs?: number } = {},
): Promise<HttpResult> {
  const u = new URL(url);
  const payload = opts.json === undefined ? undefined : Buffer.from(JSON.stringify(opts.json));
  return new Promise((resolve, reject) => {
    const t0 = process.hrtime.bigint();
    const req = http.request(
      {
        host: u.hostname,
        port: u.port,
        path: u.pathname + u.search,
        method,
        agent,
        headers: {
          accept: 'application/json',
          ...(opts.cookie ? { cookie: opts.cookie } : {}),
          ...(payload ? { 'content-type': 'application/json', 'content-length': String(payload.length) } : {}),
        },
        timeout: opts.timeoutMs ?? 30_000,
      },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () =>
          resolve({
            status: res.statusCode ?? 0,
            ms: Number(process.hrtime.bigint() - t0) / 1e6,
            body: Buffer.concat(chunks).toString('utf8'),
            headers: res.headers,
          }),
        );
        res.on('error', reject);
      },
    );
    req.on('timeout', () => req.destroy(new Error(`${method} ${url} timed out`)));
    req.on('error', reject);
    if (payload) req.write(payload);
    req.end();
  });
}

/** POST /api/auth/sign-in; returns the session cookie ("emberlot.sid=…"). */
export async function signIn(baseUrl: string, email: string, password: string): Promise<string> {
  const res = await request('POST', `${baseUrl}/api/auth/sign-in`, { json: { email, password } });
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${res.body.slice(0, 200)}`);
  const set = res.headers['set-cookie'] ?? [];
  const cookie = set.map((c) => c.split(';')[0]).find((c) => c.startsWith('emberlot.sid='));
  if (!cookie) throw new Error('sign-in answered 200 without a session cookie');
  return cookie;
}

export async function getJson<T>(url: string, cookie: string): Promise<{ ms: number; body: T }> {
  const res = await request('GET', url, { cookie });
  if (res.status !== 200) throw new Error(`GET ${url} → ${res.status} ${res.body.slice(0, 300)}`);
  return { ms: res.ms, body: JSON.parse(res.body) as T };
}

/** Nearest-rank percentile of a list of numbers (p in 0…100). */
export function percentile(values: number[], p: number): number {
  if (!values.length) return NaN;
  const sorted = [...values].sort((a, b) => a - b);
  const rank = Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length)));
  return sorted[rank - 1];
}

export const round = (x: number, digits = 1) => (Number.isFinite(x) ? Math.round(x * 10 ** digits) / 10 ** digits : x);

export function closeAgent(): void {
  agent.destroy();
}
