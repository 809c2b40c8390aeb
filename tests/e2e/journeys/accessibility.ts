import type { Page } from 'playwright-core';
import { DEMO } from './foundation';
import type { Journey, JourneyContext } from '../harness';

/** A route's shape: segments that carry an id or a code ("OV-01", a uuid) read as ":x". */
export const routeShape = (pathname: string): string =>
  pathname
    .split('/')
    .map((s) => (/\d/.test(s) ? ':x' : s))
    .join('/');

/** Wait until the screen has drawn its data: no loading indicator left, then a moment for layout. */
async function settled(page: Page): Promise<void> {
  await page.waitForLoadState('domcontentloaded');
  const until = Date.now() + 15000;
  await page.waitForTimeout(400);
  while (Date.now() < until) {
    const busy = await page.locator('[data-testid="loading"], [role="progressbar"]').count();
    if (busy === 0) break;
    await page.waitForTimeout(200);
  }
  await page.waitForTimeout(400);
}

/** Links on the page to places inside the app, deeper than `from` (details: a rig, a plan, a lot…). */
async function deeperLinks(page: Page, from: string): Promise<string[]> {
  const hrefs = await page.locator('a[href^="/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''));
  return [...new Set(hrefs.map((h) => h.split(/[?#]/)[0]!))].filter(
    (h) => h.startsWith(from + '/') || (from !== '/runs' && h.startsWith('/runs/')),
  );
}

/**
 * Words that are not for people, on any screen: a raw key or constant, an epoch or message number,
 * a source tag, validator text, "1 rows", or a date in another style than "2026-03-02 08:00".
 */
const NOT_FOR_PEOPLE: Array<[RegExp, string]> = [
  // Two letters or more each side: a subscript in a formula (T_ref, T_use) is not a key.
  [/\b([a-z]{2,}_[a-z]{2,}|[A-Z]{2,}_[A-Z]{2,})\b/, 'a raw key (snake_case)'],
  [/\b\d{13}\b/, 'an epoch in ms'],
  [/\bmessage \d{4,}/i, 'a message sequence number'],
  [/\[(memory|pub|practice)\b/, 'a source tag'],
  [/expected \w+, received \w+/, 'validator text'],
  [/\b1 (rows|readings|failures|serials|devices|alarms|plans|lines|deviations|refusals|warnings|checks)\b/, 'a wrong plural'],
  [/\b\d{1,2} (Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec)\b|\b\d{1,2}\/\d{1,2}\/\d{2,4}\b/, 'a date in another style'],
];

async function wordsForPeople(page: Page, where: string): Promise<string[]> {
  const text = await page.locator('body').innerText();
  return NOT_FOR_PEOPLE.flatMap(([re, what]) => {
    const m = re.exec(text);
    return m ? [`${where}: ${what}: “${text.slice(Math.max(0, m.index - 30), m.index + m[0].length + 30).replace(/\s+/g, ' ')}”`] : [];
  });
}

/** Every chart's text (tick labels, axis titles) lies inside its chart: a label cut at the edge ("1000" on a phone) fails. */
async function chartTextClipped(page: Page, where: string): Promise<string[]> {
  const cut = await page.locator('svg').evaluateAll((svgs) =>
    svgs.flatMap((svg) => {
      const box = svg.getBoundingClientRect();
      if (box.width < 200) return []; // icons and marks, not charts
      return ((l) => Array.from({ length: l.length }, (_, i) => l[i]!))(svg.querySelectorAll('text')).flatMap((t) => {
        const r = t.getBoundingClientRect();
        const label = (t.textContent ?? '').trim();
        return label && (r.right > box.right + 1 || r.left < box.left - 1) ? [label] : [];
      });
    }),
  );
  return cut.length ? [`${where}: chart labels cut at the edge: ${cut.slice(0, 5).join(', ')}`] : [];
}

/**
 * Charts of quantities read from zero (drift, ratio): "0" must be a tick label on both axes — hours from
 * time zero and the drift itself. Victory drops the value axis's 0 where the axes cross unless
 * `crossAxis={false}`, and a single "0" from the hours axis once hid that.
 */
async function zeroOnDriftAxes(page: Page, where: string): Promise<string[]> {
  // SVG text has no innerText: read textContent. A plot carries the x-axis title; a legend does not.
  const plots = await page
    .locator('[data-testid="trends-chart"] svg, [data-testid="lot-chart"] svg')
    .evaluateAll((svgs) =>
      svgs
        .map((svg) =>
          ((l) => Array.from({ length: l.length }, (_, i) => l[i]!))(svg.querySelectorAll('text')).map((t) => (t.textContent ?? '').trim()),
        )
        .filter((labels) => labels.includes('Stress hours (read points)')),
    );
  return plots.flatMap((labels, i) =>
    labels.filter((l) => l === '0').length >= 2 ? [] : [`${where}: chart ${i + 1} lacks a 0 on one of its axes (${labels.join(' ')})`],
  );
}

/** The rig chart's default sockets: the same on a second load (they used to follow the newest message). */
async function sameSocketsOnReload(page: Page, where: string): Promise<string[]> {
  if (await page.getByTestId('chamber-now').count()) return []; // a chamber has no sockets (its chart is air and load)
  const legend = async () => {
    await page.getByTestId('rig-chart').first().waitFor({ timeout: 15000 });
    await page.waitForTimeout(500);
    const text = await page.getByTestId('rig-chart').first().getAttribute('aria-label');
    return [...(text ?? '').matchAll(/Socket (\d+) case/g)].map((m) => Number(m[1]));
  };
  const first = await legend();
  if (!first.length) return [];
  await page.reload();
  await settled(page);
  const second = await legend();
  return first.join() === second.join()
    ? []
    : [`${where}: the chart's sockets changed on reload: ${first.join(',')} → ${second.join(',')}`];
}

/**
 * Detail pages opened by a button rather than a link ("Open plan …", "Open lot …", "New plan"):
 * press the first of each kind (its name's first two words) and note where it leads.
 */
async function openedByButtons(page: Page, from: string): Promise<string[]> {
  const names = await page
    .getByRole('button', { name: /^(Open |New plan$)/ })
    .evaluateAll((bs) => bs.map((b) => b.getAttribute('aria-label') ?? (b.textContent ?? '').trim()));
  const kinds = new Map<string, string>();
  for (const n of names) {
    const kind = n.split(' ').slice(0, 2).join(' ');
    if (!kinds.has(kind)) kinds.set(kind, n);
  }
  const out: string[] = [];
  for (const name of kinds.values()) {
    if (new URL(page.url()).pathname !== from) {
      await page.goto(page.url().replace(new URL(page.url()).pathname, from));
      await settled(page);
    }
    await page.getByRole('button', { name, exact: true }).first().click();
    await page.waitForURL((u) => u.pathname !== from, { timeout: 10000 }).catch(() => undefined);
    const at = new URL(page.url()).pathname;
    if (at !== from) out.push(at);
  }
  return out;
}

/**
 * Every screen each role can open, at this size, under axe (the harness fails on serious and
 * critical findings): the role's destinations from the navigation table, the account page, and
 * one of each kind of detail page linked from them (a rig, a run, a plan, a device type, a lot…).
 */
type Role = keyof typeof DEMO;

/** The places the app's own navigation offers this role (tab bar and "More" on a phone, side rail when wide). */
async function navigationPlaces(page: Page): Promise<string[]> {
  const topLevel = async () =>
    (await page.locator('a[href^="/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''))).filter((h) =>
      /^\/[a-z-]+$/.test(h),
    );
  const places = await topLevel();
  const more = page.getByRole('button', { name: 'More', exact: true });
  if (await more.isVisible().catch(() => false)) {
    await more.click();
    await page.waitForTimeout(300);
    places.push(...(await topLevel()));
  }
  return [...new Set(places)];
}

async function visitRole(j: JourneyContext, role: Role, problems: string[]): Promise<number> {
  const { page } = j;
  const u = DEMO[role];
  await page.context().clearCookies();
  await j.signIn(u.email, u.password);
  await page.waitForURL((url) => url.pathname === u.home, { timeout: 20000 });
  const seen = new Set<string>();
  await settled(page);
  const places = await navigationPlaces(page);
  if (places.length < 3) throw new Error(`${role}: the navigation offers only ${places.join(', ')}`);
  const queue: Array<{ path: string; depth: number }> = [...places, '/account'].map((path) => ({ path, depth: 0 }));
  let visited = 0;
  while (queue.length) {
    const { path, depth } = queue.shift()!;
    const shape = routeShape(path);
    if (seen.has(shape)) continue;
    seen.add(shape);
    await page.goto(`${j.baseUrl}${path}`);
    await settled(page);
    if (new URL(page.url()).pathname !== path) throw new Error(`${role} opening ${path} landed on ${page.url()}`);
    // Every screen is checked before the journey fails, so one run lists every finding.
    await j.checkA11y(`${role} ${shape}`).catch((e: unknown) => problems.push(e instanceof Error ? e.message : String(e)));
    const where = `${role} ${shape}`;
    // The audit log shows each entry's details as recorded (a record for auditors), so its words are not checked.
    if (shape !== '/audit') problems.push(...(await wordsForPeople(page, where)));
    problems.push(...(await chartTextClipped(page, where)));
    if (shape.startsWith('/trends')) problems.push(...(await zeroOnDriftAxes(page, where)));
    if (shape === '/floor/:x' && role === 'operator') problems.push(...(await sameSocketsOnReload(page, where)));
    if (shape === '/floor/:x' || shape.startsWith('/trends/lots') || shape === '/rigs')
      await j.shot(`${role}-${shape.replace(/[/:]+/g, '-')}`);
    visited += 1;
    if (depth < 2) {
      const next = [...(await deeperLinks(page, path)), ...(await openedByButtons(page, path))];
      for (const n of next) if (!seen.has(routeShape(n))) queue.push({ path: n, depth: depth + 1 });
    }
  }
  j.log(`${role}: ${visited} screens checked (${[...seen].join(', ')})`);
  return visited;
}

export const accessibilityEveryScreen: Journey = {
  name: 'accessibility',
  run: async (j) => {
    const problems: string[] = [];
    for (const role of ['admin', 'engineer', 'operator', 'manager'] as const) await visitRole(j, role, problems);
    for (const p of problems) j.log(p);
    if (problems.length) throw new Error(`${problems.length} findings (listed above); first: ${problems[0]}`);
  },
};
