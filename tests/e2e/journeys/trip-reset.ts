import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Engineer: a socket that live protection tripped on OV-03 (the demo fleet dries out the thermal
 * pads of sockets 5 and 11) is reset with a reason from the rig's board. The server re-checks the
 * plan for that socket's device, clears the latch and has the rig re-energise the socket; the
 * dialog carries the safety caution. Runs after the operator journey, which acknowledges those
 * trips' alarms (it reads the alarms, not the sockets' state).
 */
export const engineerTripReset: Journey = {
  name: 'engineer-trip-reset',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === DEMO.engineer.home);
    await page.goto(`${j.baseUrl}/floor/OV-03`);
    await expect(page.getByRole('heading', { name: 'Rig OV-03' }).first()).toBeVisible();
    const tripped = page.getByRole('button', { name: /^Socket (5|11), .*, tripped/ }).first();
    await expect(tripped).toBeVisible(120000); // the demo's failing pads need a minute or two of stress
    const label = (await tripped.getAttribute('aria-label')) ?? '';
    const socket = Number(label.match(/^Socket (\d+)/)?.[1]);
    await tripped.click();
    const detail = page.getByTestId('socket-detail');
    await expect(detail).toContainText(`Socket ${socket}`);
    await expect(detail).toContainText('Tripped (latched off)');
    await j.shot('tripped-socket');
    await detail.getByRole('button', { name: 'Reset trip…' }).click();
    const dialog = page.getByRole('dialog');
    await expect(dialog.getByText(`Reset the trip of socket ${socket} on OV-03`)).toBeVisible();
    await expect(dialog.getByText(/A software trip is no substitute for the rig's hardware interlocks\./)).toBeVisible();
    // Too short a reason: the button stays disabled.
    await dialog.getByLabel('Reason', { exact: true }).fill('pad ok');
    const confirm = dialog.getByRole('button', { name: 'Reset and re-energise' });
    if ((await confirm.getAttribute('aria-disabled')) !== 'true') throw new Error('Reset is enabled with a 6-character reason');
    await dialog.getByLabel('Reason', { exact: true }).fill(`Thermal pad replaced, clamp torque checked (${j.size} journey).`);
    await j.checkA11y('trip reset dialog');
    await j.shot('trip-reset-dialog');
    await dialog.getByRole('button', { name: 'Reset and re-energise' }).click();
    await expect(page.getByRole('dialog')).toHaveCount(0, 15000);
    await expect(page.getByTestId('trip-reset-done')).toContainText(
      new RegExp(
        `^Socket ${socket} reset \\(plan check (ok|warn)\\)\\. Latch cleared: confirmed by the rig\\. Bias on: confirmed by the rig\\.$`,
      ),
    );
    await j.shot('trip-reset-done');
  },
};
