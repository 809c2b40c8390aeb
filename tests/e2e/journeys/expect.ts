/** Playwright's web-first assertions without @playwright/test: poll until true or time out. */
import type { Locator } from 'playwright-core';

const TIMEOUT = 15000;

async function poll(what: string, check: () => Promise<boolean>, timeout = TIMEOUT): Promise<void> {
  const until = Date.now() + timeout;
  for (;;) {
    if (await check().catch(() => false)) return;
    if (Date.now() > until) throw new Error(`timed out after ${timeout} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export function expect(locator: Locator) {
  const desc = locator.toString();
  return {
    toBeVisible: (timeout?: number) => poll(`${desc} to be visible`, () => locator.first().isVisible(), timeout),
    toBeHidden: (timeout?: number) => poll(`${desc} to be hidden`, async () => !(await locator.first().isVisible()), timeout),
    toHaveCount: (n: number, timeout = 3000) => poll(`${desc} to have count ${n}`, async () => (await locator.count()) === n, timeout),
    toContainText: (text: string | RegExp, timeout?: number) =>
      poll(
        `${desc} to contain ${text}`,
        async () => {
          const t = (await locator.first().innerText()) ?? '';
          return typeof text === 'string' ? t.includes(text) : text.test(t);
        },
        timeout,
      ),
  };
}
