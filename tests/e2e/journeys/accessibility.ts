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
  return [...new Set(hrefs.map((h) => h.split(/[?#]/)[0]!))].filter((h) => h.startsWith(from + '/') || (from !== '/runs' && h.startsWith('/runs/')));
}

/**
 * Detail pages opened by a button rather than a link ("Open plan …", "Open lot …", "New plan"):
 * press the first of each kind (its name's first two words) and note where it leads.
 */
async function openedByButtons(page: Page, from: string): Promise<string[]> {
  const names = await page.getByRole('button', { name: /^(Open |New plan$)/ }).evaluateAll((bs) =>
    bs.map((b) => b.getAttribute('aria-label') ?? (b.textContent ?? '').trim()),
  );
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
    (await page.locator('a[href^="/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''))).filter((h) => /^\/[a-z-]+$/.test(h));
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
    if (problems.length) throw new Error(`${problems.length} screens with serious or critical findings (listed above); first: ${problems[0]}`);
  },
};
