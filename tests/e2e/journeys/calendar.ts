import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Manager: the schedule as a calendar (issues #26.1 and #23.9): time labels inside the screen on a
 * phone, the same scale on every visit (remembered), zoom and pan by buttons, keyboard and drag, due
 * dates and lateness per run in words (the demo's heating HOTL run is due before it can finish), the
 * priority, and a proposal that orders the booked runs by priority-weighted lateness (not accepted
 * here: later journeys read the demo's bookings).
 */
export const managerCalendar: Journey = {
  name: 'calendar',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    // The manager's phone tabs hold other places; the schedule is reached by its address there.
    if (j.size === 'phone') await page.goto(new URL('/schedule', page.url()).toString());
    else await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    const timeline = page.getByTestId('schedule-timeline');
    await expect(timeline).toBeVisible(30000);

    // Time labels: at least two, each inside the viewport (the phone once showed none).
    const axis = page.getByTestId('schedule-axis');
    const viewport = page.viewportSize()!;
    const labels = axis.locator('div[dir="auto"]');
    await expect(labels.first()).toBeVisible();
    const boxes = [];
    for (let k = 0; k < (await labels.count()); k++) {
      const b = await labels.nth(k).boundingBox();
      if (b && b.width > 0) boxes.push({ text: (await labels.nth(k).innerText()).trim(), x: b.x, right: b.x + b.width });
    }
    const inside = boxes.filter((b) => b.x >= 0 && b.right <= viewport.width);
    if (inside.length < 2) throw new Error(`fewer than two time labels inside the screen: ${JSON.stringify(boxes)}`);
    j.log(`time labels: ${inside.map((b) => b.text).join(' | ')}`);
    // The demo clock runs one stress hour per second: labels count clock time from now.
    if (!inside.some((b) => b.text === 'now' || /^[+−]\d/.test(b.text)))
      throw new Error(`labels not in clock time: ${JSON.stringify(inside)}`);

    // The same scale on every visit: the default, then the person's choice after a reload.
    const scale = page.getByTestId('schedule-scale');
    await expect(scale).toContainText('Scale: 1 day per 100 px');
    await page.getByRole('button', { name: 'Zoom out', exact: true }).click();
    await expect(scale).toContainText('Scale: 2 days per 100 px');
    await page.reload();
    await expect(page.getByTestId('schedule-timeline')).toBeVisible(30000);
    await expect(scale).toContainText('Scale: 2 days per 100 px');
    // Keyboard: the zoom buttons take focus and Enter.
    await page.getByRole('button', { name: 'Zoom in', exact: true }).focus();
    await page.keyboard.press('Enter');
    await expect(scale).toContainText('Scale: 1 day per 100 px');

    // Due dates and lateness, in words, with the priority.
    const due = page.getByTestId('due-dates');
    await expect(due).toBeVisible();
    const hotl = due.locator('[role="row"], [role="listitem"]').filter({ hasText: 'HOTL-2609-D-2' });
    await expect(hotl).toHaveCount(1, 15000);
    await expect(hotl).toContainText('Urgent');
    await expect(hotl).toContainText(/Late by \d/);
    const thb = due.locator('[role="row"], [role="listitem"]').filter({ hasText: 'THB-2612-G' });
    await expect(thb).toContainText('On time');
    // The bar says it too (its link name), besides its end cap and octagon.
    await expect(page.getByRole('link', { name: /^Open run HOTL-2609-D-2, .*priority Urgent, due .*, late by \d/ })).toBeVisible();
    await j.checkA11y('schedule with due dates');
    await j.shot('calendar-schedule');
    await due.scrollIntoViewIfNeeded();
    await j.shot('calendar-due-dates');

    // Pan: Later moves the labels off "now"; Now brings them back; a drag on the track pans too.
    const firstLabel = async () => ((await labels.first().innerText()) ?? '').trim();
    await timeline.scrollIntoViewIfNeeded();
    const before = await firstLabel();
    await page.getByRole('button', { name: /^Later by / }).click();
    await expect(page.getByRole('button', { name: 'Back to now' })).toBeVisible();
    const later = await firstLabel();
    if (later === before) throw new Error(`Later did not move the time axis (${before})`);
    await page.getByRole('button', { name: 'Back to now' }).click();
    const track = await page.getByTestId('schedule-track').boundingBox();
    if (!track) throw new Error('no schedule track');
    // On the time axis (no bar there to open); a drag that starts on a bar pans as well.
    const y = track.y + 12;
    await page.mouse.move(track.x + track.width * 0.8, y);
    await page.mouse.down();
    for (let k = 1; k <= 8; k++) await page.mouse.move(track.x + track.width * (0.8 - 0.06 * k), y);
    await page.mouse.up();
    const dragged = await firstLabel();
    j.log(`axis: ${before} → Later: ${later} → drag: ${dragged}`);
    if (dragged === before) throw new Error(`dragging the track did not move the time axis (${before})`);
    if (new URL(page.url()).pathname !== '/schedule') throw new Error(`the drag opened ${page.url()} instead of panning`);
    await j.shot('calendar-panned');

    // The proposal: booked runs ordered by priority-weighted lateness (shown, not accepted).
    await page.getByRole('button', { name: 'Propose an order' }).click();
    const proposal = page.getByTestId('calendar-proposal');
    await expect(proposal).toBeVisible(20000);
    await expect(proposal).toContainText(
      // Exhaustive up to 7 booked runs; the journeys before this one may have booked more.
      /Weighted lateness as booked: [\d.]+ h; proposed: [\d.]+ h \((best order found by exhaustive search|heuristic order: [^)]+)\)/,
    );
    await expect(proposal).toContainText('HTRB-2611-A+1');
    await j.checkA11y('calendar proposal');
    await proposal.scrollIntoViewIfNeeded();
    await j.shot('calendar-proposal');
  },
};
