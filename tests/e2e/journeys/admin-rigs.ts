import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Admin registers a rig and sees its MQTT secret exactly once. Runs last: the new rig (offline,
 * never connected) would otherwise show on the floor and in booking proposals of other journeys.
 */
export const adminRigs: Journey = {
  name: 'admin-rigs',
  run: async (j) => {
    const { page } = j;
    const code = `TST-${j.size === 'phone' ? 'P' : 'W'}${Date.now().toString(36).slice(-5).toUpperCase()}`;
    await j.signIn(DEMO.admin.email, DEMO.admin.password);
    await page.waitForURL((u) => u.pathname === DEMO.admin.home);
    await j.navTo('Rigs');
    await page.waitForURL((u) => u.pathname === '/rigs');
    await expect(page.getByRole('heading', { name: 'Rigs' }).first()).toBeVisible();
    await expect(page.getByTestId('rigs-table')).toContainText('OV-01');
    await j.checkA11y('rigs');
    await j.shot('rigs');

    await page.getByTestId('register-rig').click();
    await page.getByTestId('rig-code').fill(code);
    await page.getByTestId('rig-name').fill(`Bench oven for the ${j.size} journey`);
    await page.getByTestId('rig-sockets').fill('16');
    await page.getByTestId('rig-max-temp').fill('150');
    await page.getByTestId('rig-max-voltage').fill('200');
    await j.checkA11y('register rig form');
    await page.getByTestId('rig-submit').click();

    const reveal = page.getByTestId('secret-reveal');
    await expect(reveal).toBeVisible();
    await expect(reveal).toContainText(`MQTT credentials for rig ${code} — shown once`);
    await expect(page.getByTestId('secret-username')).toContainText(`rig-${code.toLowerCase()}`);
    const secret = (await page.getByTestId('secret-value').innerText()).trim();
    if (secret.length < 16) throw new Error(`the one-time secret looks too short: ${secret.length} characters`);
    await j.checkA11y('secret reveal');
    await j.shot('secret-shown-once');

    await page.getByTestId('secret-done').click();
    await expect(page.getByTestId('secret-reveal')).toHaveCount(0);
    // The rig is listed, and the secret is nowhere on the page any more.
    await expect(page.getByTestId('rigs-table')).toContainText(code);
    if ((await page.locator('body').innerText()).includes(secret)) throw new Error('the secret is still shown after closing the notice');
    await page.reload();
    await expect(page.getByTestId('rigs-table')).toContainText(code);
    if ((await page.locator('body').innerText()).includes(secret)) throw new Error('the secret is shown again after a reload');
    await j.shot('rig-registered');
  },
};
