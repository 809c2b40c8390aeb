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

    // Status pills stay inside their cells: no text of a row lies under one of its buttons (at
    // 1440 px the pills ran under "Maintenance").
    const overlaps = await page.getByTestId('rigs-table').evaluate((table) => {
      // (No DOM lib in this tsconfig: NodeLists are read by index.)
      const all = table.querySelectorAll('*');
      const els = Array.from({ length: all.length }, (_, i) => all[i]!);
      const buttons = els.filter((e) => e.getAttribute('role') === 'button' || e.tagName === 'BUTTON');
      const texts = els.filter((e) => e.children.length === 0 && (e.textContent ?? '').trim() && !buttons.some((b) => b.contains(e)));
      const hits: string[] = [];
      for (const b of buttons) {
        const r = b.getBoundingClientRect();
        for (const t of texts) {
          const q = t.getBoundingClientRect();
          const w = Math.min(r.right, q.right) - Math.max(r.left, q.left);
          const h = Math.min(r.bottom, q.bottom) - Math.max(r.top, q.top);
          if (w > 2 && h > 2) hits.push(`${(t.textContent ?? '').trim()} under ${(b.textContent ?? '').trim()}`);
        }
      }
      return hits;
    });
    if (overlaps.length) throw new Error(`rigs table: text under a button: ${overlaps.slice(0, 3).join('; ')}`);

    // Intake health in words: labelled values and a date, no raw counter key or epoch.
    const health = await page.getByTestId('ingest-health').innerText();
    if (/[A-Za-z]+_[A-Za-z]+|\b\d{13}\b/.test(health)) throw new Error(`intake health shows raw internals: ${health.slice(0, 200)}`);
    if (await page.getByTestId('intake-rollups_flushed_at_ms').count())
      await expect(page.getByTestId('intake-rollups_flushed_at_ms')).toContainText(
        /Per-minute summaries written up to\s+(\d{4}-\d{2}-\d{2} \d{2}:\d{2}|Not yet)/i,
      );

    // Maintenance opens where the person is: a sheet in view, even for the last rig of the list.
    await page
      .getByRole('button', { name: /^Maintenance of rig / })
      .last()
      .click();
    const sheet = page.getByTestId('rig-service-sheet');
    await expect(sheet).toBeVisible();
    await expect(page.getByTestId('maintenance-panel')).toBeVisible();
    const box = await page.getByTestId('maintenance-panel').boundingBox();
    const view = page.viewportSize()!;
    if (!box || box.y < 0 || box.y > view.height - 80)
      throw new Error(`the maintenance panel is out of view (top at ${box?.y} of ${view.height} px)`);
    await page.getByRole('button', { name: 'Book maintenance' }).click();
    await expect(page.getByText('Use the form 2031-03-04 08:00')).toBeVisible();
    await j.checkA11y('maintenance sheet');
    await j.shot('maintenance-sheet');
    await page.getByTestId('maintenance-panel').getByRole('button', { name: 'Close' }).click();
    await expect(sheet).toHaveCount(0);

    // A field the server refuses gets a message in words beside it, not the validator's text.
    await page.getByTestId('hold-edit').click();
    await page.getByTestId('hold-bias-off-at').fill('');
    await page.getByTestId('hold-reason').fill('Checking the form');
    await page.getByTestId('hold-save').click();
    await expect(page.getByTestId('hold-settings-form')).toContainText(/enter a temperature in °C|Enter a number/);
    if (/expected \w+, received/.test(await page.getByTestId('hold-settings-form').innerText())) throw new Error('validator text shown');
    await j.shot('hold-field-error');
    await page.getByTestId('hold-settings-form').getByRole('button', { name: 'Cancel' }).click();

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
    // The broker address from the server's configuration (the port the stack under test listens on), and a copy button.
    await expect(page.getByTestId('secret-broker-host')).toContainText('127.0.0.1');
    await expect(page.getByTestId('secret-broker-port')).toContainText(String(j.mqttPort));
    await page.context().grantPermissions(['clipboard-read', 'clipboard-write'], { origin: j.baseUrl });
    await page.getByRole('button', { name: 'Copy the secret' }).click();
    await expect(page.getByTestId('secret-value-copied')).toContainText('Secret copied to the clipboard.');
    const copied = await page.evaluate('navigator.clipboard.readText()');
    if (copied !== secret) throw new Error('the clipboard does not hold the secret');
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
