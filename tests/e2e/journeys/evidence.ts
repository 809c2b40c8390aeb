import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Engineer: the HTRB plan asks for 77 devices and the largest rig holds 64, so the sample is split
 * across two rigs and booked together; a smaller single-rig booking first shows the shortfall and
 * needs a recorded deviation.
 */
export const engineerSplitSample: Journey = {
  name: 'engineer-split-sample',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname !== '/sign-in');
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    await page.getByRole('button', { name: 'Book a run' }).click();
    await page.getByRole('checkbox', { name: 'HTRB 150 °C (Tj max), 80 % VCBO, 1000 h (JESD22-A108) · HPD-2N140' }).click();
    await page.getByRole('checkbox', { name: /^HG2611-A \(\d+ registered\)$/ }).click();
    const planSize = await page.getByLabel('Devices (sample size)').inputValue();
    if (planSize !== '77') throw new Error(`the sample size starts at ${planSize}, not the plan's 77`);

    // 64 on one rig: the shortfall is spelled out and booking waits for a deviation reason.
    await page.getByLabel('Devices (sample size)').fill('64');
    await page.getByRole('button', { name: 'Find rigs' }).click();
    const proposals = page.getByTestId('booking-proposals');
    await expect(proposals.getByText('The plan asks for 77 devices; this booking holds 64 (13 short).', { exact: false })).toBeVisible();
    const bookShort = proposals.getByRole('button', { name: /^Book on OV-0[12]$/ }).first();
    await expect(bookShort).toBeVisible();
    if (!(await bookShort.isDisabled()) && (await bookShort.getAttribute('aria-disabled')) !== 'true')
      throw new Error('a short booking is offered without a deviation reason');
    await j.shot('short-sample-needs-deviation');

    // The full 77, split 64 + 13 over two rigs.
    await page.getByLabel('Devices (sample size)').fill('77');
    await page.getByRole('checkbox', { name: 'Split the sample across two rigs' }).click();
    const firstRig = await page.getByLabel('Devices on the first rig').inputValue();
    if (firstRig !== '64') throw new Error(`the first rig gets ${firstRig} devices, not 64`);
    await expect(page.getByText('The other 13 go to a second rig.')).toBeVisible();
    await page.getByRole('button', { name: 'Find rigs' }).click();
    const split = page.getByTestId('split-booking');
    await expect(split).toBeVisible();
    await expect(split.getByText('Part 1: 64 devices')).toBeVisible();
    await expect(split.getByText('Part 2: 13 devices')).toBeVisible();
    await split.getByRole('checkbox', { name: 'Part 1 on OV-01' }).click();
    await split.getByRole('checkbox', { name: 'Part 2 on OV-02' }).click();
    const bookBtn = page.getByTestId('book-sample');
    await expect(bookBtn).toContainText('Book the sample on OV-01 + OV-02');
    await j.checkA11y('split booking');
    await split.scrollIntoViewIfNeeded();
    await j.shot('split-booking');
    await bookBtn.click();
    const booked = await page
      .waitForURL((u) => u.pathname.startsWith('/runs/'), { timeout: 10000 })
      .then(
        () => true,
        () => false,
      );
    if (!booked) {
      const why = (await page.getByTestId('booking-proposals').innerText())
        .split('\n')
        .filter((l) => /free|proposal|short|rig/i.test(l))
        .join(' | ');
      throw new Error(`the split sample was not booked: ${why}`);
    }
    const sample = page.getByTestId('run-sample');
    await expect(sample).toContainText(
      /^Sample: 77 of the plan's 77 devices, split over runs HTRB-2611-A-\d+ \+ HTRB-2611-A-\d+ and judged as one\.$/,
    );
    await j.checkA11y('run of a split sample');
    await j.shot('split-sample-run');
    j.log(await sample.innerText());
  },
};

/**
 * Operator: a finished run's 1000 h read point is incomplete (devices without a reading); one dead
 * device is entered by hand as open, another gets a recorded disposition, and the count of missing
 * devices falls with each.
 */
export const operatorReadPointEvidence: Journey = {
  name: 'operator-read-point-evidence',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname !== '/sign-in');
    await j.navTo('Read points');
    await page.waitForURL((u) => u.pathname === '/readings');
    await page.getByRole('radio', { name: /^HTRB-2611-B · HG2611-B · finished$/ }).click();
    await page.getByRole('radio', { name: /^1000 h · \d+\/64 stored/ }).click();
    const coverage = page.getByTestId('readings-coverage');
    await expect(coverage).toBeVisible();
    const status = page.getByTestId('coverage-status');
    await expect(status).toContainText(/^Incomplete: \d+ missing$/);
    const missingBefore = Number((await status.innerText()).match(/(\d+) missing/)![1]);
    const serials = (await page.getByTestId('coverage-missing').innerText()).replace(/^Missing: /, '').split(', ');
    if (missingBefore < 2 || serials.length !== missingBefore)
      throw new Error(`expected at least two missing devices, saw ${missingBefore}: ${serials.join(', ')}`);
    j.log(`missing at 1000 h: ${serials.join(', ')}`);
    await j.checkA11y('read-point coverage');
    await coverage.scrollIntoViewIfNeeded();
    await j.shot('coverage-incomplete');

    // A dead device by hand: result "Open", no values.
    const manual = page.getByTestId('manual-entry');
    await manual.getByRole('radio', { name: 'Open' }).click();
    await expect(manual.getByLabel('Device 1: hFE')).toHaveCount(0);
    await manual.getByLabel('Device 1: Serial').fill(serials[0]);
    await page.getByTestId('manual-store').click();
    await expect(manual.getByText(/^1 new and 0 replaced reading/)).toBeVisible();
    await expect(status).toContainText(missingBefore - 1 === 0 ? /^Complete$/ : new RegExp(`^Incomplete: ${missingBefore - 1} missing$`));
    await expect(coverage).toContainText(/1 dead \(open, short or no reading\)|\d+ dead/);

    // A lost device: a disposition with a reason.
    const form = page.getByTestId('disposition-form');
    await form.getByLabel('Disposition serial').fill(serials[1]);
    await form.getByRole('radio', { name: 'Lost' }).click();
    await form.getByLabel('Disposition reason').fill(`Not in the carrier after unloading (${j.size} check)`);
    await page.getByTestId('disposition-save').click();
    await expect(form.getByText(new RegExp(`^${serials[1]}: Lost from 1000 h, recorded by Priya Castell\\.$`))).toBeVisible();
    await expect(status).toContainText(missingBefore - 2 === 0 ? /^Complete$/ : new RegExp(`^Incomplete: ${missingBefore - 2} missing$`));
    await expect(coverage).toContainText(
      `${serials[1]} · Lost from 1000 h · Not in the carrier after unloading (${j.size} check) (Priya Castell,`,
    );
    await j.checkA11y('disposition recorded');
    await form.scrollIntoViewIfNeeded();
    await j.shot('disposition-recorded');
  },
};
