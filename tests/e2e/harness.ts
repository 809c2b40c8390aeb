/**
 * Browser-journey harness: Debian's chromium driven by playwright-core (never a browser
 * download), the whole stack on loopback ports of its own, a fresh database with demo data.
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';
export const SCREENSHOT_DIR = path.resolve(__dirname, 'screenshots');

export const SIZES = {
  phone: { width: 390, height: 844 },
  wide: { width: 1440, height: 900 },
} as const;
export type SizeName = keyof typeof SIZES;

/** Debian's chromium, installed with apt-get when missing (CI runs as root). */
export function ensureChromium(): void {
  if (fs.existsSync(CHROMIUM)) return;
  if (process.getuid?.() !== 0) throw new Error('chromium is missing: sudo apt-get install -y chromium');
  console.log('[e2e] installing Debian package chromium (one time)…');
  for (const args of [['update'], ['install', '-y', '--no-install-recommends', 'chromium']]) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } });
    if (r.status !== 0) throw new Error(`apt-get ${args.join(' ')} failed`);
  }
}

export async function openBrowser(size: SizeName): Promise<BrowserContext> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-e2e-'));
  return chromium.launchPersistentContext(dir, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: SIZES[size],
    deviceScaleFactor: 1,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--disable-dev-shm-usage',
    ],
  });
}

export interface JourneyContext {
  baseUrl: string;
  /** The MQTT port the stack under test listens on (what the server tells a new rig). */
  mqttPort: number;
  size: SizeName;
  page: Page;
  /** Save a screenshot named after the step (tests/e2e/screenshots/<size>/<journey>-<n>-<step>.png). */
  shot: (step: string) => Promise<void>;
  /**
   * axe-core on the current page: fails on any serious or critical violation (no exceptions list:
   * a finding is fixed, not switched off) and on the rules in A11Y_ALWAYS_FAIL. Other moderate and
   * minor ones are logged.
   */
  checkA11y: (where: string) => Promise<void>;
  signIn: (email: string, password: string) => Promise<void>;
  log: (m: string) => void;
  /** Shared between the two sizes of one journey (e.g. a name made unique per size). */
  unique: string;
  /** Open a top-level place from the app's own navigation: side rail when wide, tab bar or "More" on a phone. */
  navTo: (label: string) => Promise<void>;
}

export interface Journey {
  name: string;
  run: (j: JourneyContext) => Promise<void>;
}

/** Moderate or minor axe rules that fail a journey too: fixed once, they must not come back. */
const A11Y_ALWAYS_FAIL = new Set(['heading-order', 'empty-table-header']);

const AXE_SOURCE = fs.readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');

export function makeContext(
  baseUrl: string,
  mqttPort: number,
  size: SizeName,
  journey: string,
  page: Page,
  a11yLog: string[],
): JourneyContext {
  let n = 0;
  const dir = path.join(SCREENSHOT_DIR, size);
  fs.mkdirSync(dir, { recursive: true });
  const ctx: JourneyContext = {
    baseUrl,
    mqttPort,
    size,
    page,
    unique: `${size}-${Date.now().toString(36)}`,
    log: (m) => console.log(`[e2e ${journey} @${size}] ${m}`),
    shot: async (step) => {
      n += 1;
      await page.screenshot({ path: path.join(dir, `${journey}-${String(n).padStart(2, '0')}-${step}.png`), fullPage: false });
    },
    checkA11y: async (where) => {
      await page.evaluate(AXE_SOURCE);
      const result = (await page.evaluate(`axe.run(document, ${JSON.stringify({ resultTypes: ['violations'] })})`)) as {
        violations: Array<{ id: string; impact: string; help: string; nodes: Array<{ target: string[]; html?: string }> }>;
      };
      const describe = (v: (typeof result.violations)[number]) =>
        `${where}: ${v.id} (${v.impact}, ${v.nodes.length}) — ${v.help} at ${v.nodes
          .slice(0, 3)
          .map((x) => (x.html ?? x.target.join(' ')).slice(0, 160))
          .join(' | ')}`;
      const fails = (v: (typeof result.violations)[number]) =>
        v.impact === 'serious' || v.impact === 'critical' || A11Y_ALWAYS_FAIL.has(v.id);
      a11yLog.push(...result.violations.filter((v) => !fails(v)).map(describe));
      const failing = result.violations.filter(fails);
      if (failing.length) throw new Error(`accessibility: ${failing.map(describe).join('; ')}`);
    },
    navTo: async (label) => {
      // A place with a count (the open alarms) is named "Alarms, 3 open".
      const link = page.getByRole('link', { name: new RegExp(`^${label.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(, \\d+ open)?$`) });
      // The tab bar comes in its own chunk (components/shell/LazyNav.tsx): wait until it is drawn, or a
      // tab not yet there reads as "under More".
      if (size === 'phone') await page.getByRole('button', { name: 'More', exact: true }).waitFor({ state: 'visible', timeout: 15000 });
      if (
        size === 'phone' &&
        !(await link
          .first()
          .isVisible()
          .catch(() => false))
      ) {
        await page.getByRole('button', { name: 'More', exact: true }).click();
      }
      await link.first().click();
    },
    signIn: async (email, password) => {
      await page.goto(`${baseUrl}/sign-in`);
      await page.getByLabel(/e-?mail/i).fill(email);
      await page.getByLabel(/password/i).fill(password);
      await page.getByRole('button', { name: /sign in/i }).click();
    },
  };
  return ctx;
}
