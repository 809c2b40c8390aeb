import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Operator: a reading at 168 h of the in-progress HG2612-C run on OV-02 is corrected. Without a
 * reason nothing is sent; with one the reading becomes version 2 and the device's history shows
 * both versions, the earlier one superseded, the new one with its reason, person and time.
 * Each size corrects a different device (phone the first, wide the second), so the two never meet.
 */
export const operatorCorrectReading: Journey = {
  name: 'operator-correct-reading',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname !== '/sign-in');
    await j.navTo('Read points');
    await page.waitForURL((u) => u.pathname === '/readings');
    await page.getByRole('radio', { name: /^HTRB-2612-C-2 · HG2612-C · stressing$/ }).click();
    await page.getByRole('radio', { name: /^168 h · \d+\/13 stored/ }).click();
    const panel = page.getByTestId('stored-readings');
    await expect(panel).toBeVisible();

    const correct = panel.locator('[data-testid^="correct-"]').nth(j.size === 'phone' ? 0 : 1);
    const serial = (await correct.getAttribute('data-testid'))!.replace(/^correct-/, '');
    const row = panel.getByTestId(`stored-${serial}`);
    const before = (await row.innerText()).match(/hFE ([\d.]+)/)?.[1];
    if (!before) throw new Error(`no hFE shown for ${serial}: ${await row.innerText()}`);
    j.log(`correcting ${serial} at 168 h, hFE ${before}`);
    await correct.click();

    const form = panel.getByTestId('correct-form');
    const hfe = form.getByLabel('Corrected hFE');
    const stored = Number(await hfe.inputValue());
    const fixed = +(stored + 0.5).toFixed(3);
    await hfe.fill(String(fixed));
    // No reason: refused on the spot, nothing sent.
    await form.getByTestId('correct-save').click();
    await expect(form.getByText('Give the reason for the change in at least 10 characters')).toBeVisible();
    await form.scrollIntoViewIfNeeded();
    await j.shot('correction-needs-reason');

    const reason = `Tester printout re-read: hFE was ${fixed} (${j.size})`;
    await form.getByLabel('Correction reason').fill(reason);
    await form.getByTestId('correct-save').click();
    await expect(row.getByText(`${serial} is now version 2; the earlier value stays in its history.`)).toBeVisible();
    await expect(row.getByText('Version 2 · corrected')).toBeVisible();

    const history = row.getByTestId('reading-history');
    await expect(history).toBeVisible();
    const v1 = history.getByTestId('version-168-1');
    const v2 = history.getByTestId('version-168-2');
    await expect(v1).toContainText('Superseded');
    await expect(v1).toContainText(`hFE ${+Number(before).toPrecision(5)}`);
    await expect(v2).toContainText('Current');
    await expect(v2).toContainText(`hFE ${+fixed.toPrecision(5)}`);
    await expect(v2).toContainText(`Reason: ${reason}`);
    await expect(v2).toContainText(/Corrected by Priya Castell · /);
    await j.checkA11y('reading corrected, history open');
    await history.scrollIntoViewIfNeeded();
    await j.shot('correction-both-versions');
  },
};
