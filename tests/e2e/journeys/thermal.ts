import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/** The demo's socket with a drying thermal pad (scripts/demo-fleet.ts DRYING_PAD_SOCKET) on OV-03. */
const PAD_SOCKET = 2;

/**
 * Operator: the socket thermal model. The OV-03 tile names the socket whose thermal path is
 * degrading (the demo fleet dries out socket 2's pad slowly); its socket sheet shows the identified
 * θ and τ with their fit quality, the run's first value and the change against the flag limit, and
 * the identifications; a healthy socket shows its θ without a flag; the alarms list carries the flag.
 */
export const thermal: Journey = {
  name: 'thermal',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');
    const tile = page.getByTestId('rig-tile-OV-03');
    // The pad needs a stress hour or two at OV-03's 0.04 h per second before it is flagged.
    await expect(page.getByTestId('rig-tile-thermal-OV-03')).toContainText(`Thermal path degrading: socket ${PAD_SOCKET}`, 150000);
    await tile.scrollIntoViewIfNeeded();
    await j.shot('floor-thermal-flag');
    await tile.click();
    await page.waitForURL((u) => u.pathname === '/floor/OV-03');
    await page.getByRole('button', { name: new RegExp(`^Socket ${PAD_SOCKET}, `) }).click();
    const card = page.getByTestId('socket-thermal');
    await expect(card).toBeVisible(20000);
    await expect(card.getByTestId('socket-thermal-flag')).toContainText('Thermal path degrading', 20000);
    await expect(card.getByTestId('socket-theta')).toContainText(/θ case–chamber\s*\d+(\.\d+)? °C\/W/);
    await expect(card.getByTestId('socket-tau')).toContainText(/τ \(time constant\)\s*(\d+(\.\d+)? (s|min)|not identifiable)/);
    await expect(card.getByTestId('socket-thermal-fit')).toContainText(/RMS \d+\.\d\d K · (step response|steady state), \d+ samples/);
    await expect(card.getByTestId('socket-thermal-rise')).toContainText(/\+\d+ % \(flag above \+25 %\)/);
    // The demo's pad dries fast (0.5 °C/W per h): the step rule flags it before the trend rule has its
    // 10 spaced fits (measured in tests/unit/thermal-trend.test.ts); the trend row shows either state.
    await expect(card.getByTestId('socket-thermal-flag-rule')).toContainText('Flagged by the step rule');
    await expect(card.getByTestId('socket-thermal-trend')).toContainText(
      /Trend of θ\s*(after \d+ spaced good fits|[+−]?[\d.]+ °C\/W per 100 h \(90 % interval)/,
    );
    await expect(card.getByTestId('socket-thermal-history')).toContainText(/Identifications \(\d+ stored this run, newest first\)/i);
    await expect(card).toContainText('no substitute for the rig’s hardware interlocks');
    await card.scrollIntoViewIfNeeded();
    await j.checkA11y('socket thermal path');
    await j.shot('socket-thermal-degrading');

    // A healthy neighbour: θ near the simulator's 2 °C/W, no flag.
    await page.getByRole('button', { name: /^Socket 0, / }).click();
    // (Three significant figures: exactly 2 reads "2 °C/W".)
    await expect(card.getByTestId('socket-theta')).toContainText(/θ case–chamber\s*[12](\.\d+)? °C\/W/, 30000);
    await expect(card.getByTestId('socket-thermal-flag')).toHaveCount(0);
    await card.scrollIntoViewIfNeeded();
    await j.shot('socket-thermal-healthy');

    // The flag on the alarms list, a warning of its own kind.
    await j.navTo('Alarms');
    await page.waitForURL((u) => u.pathname === '/alarms');
    await page.getByRole('radio', { name: 'Warning', exact: true }).click();
    // The filtered list replaces the whole one: wait until the critical trips have left it.
    await expect(page.getByRole('heading', { name: /tripped: runaway$/ })).toHaveCount(0, 15000);
    const heading = page.getByRole('heading', { name: `Socket ${PAD_SOCKET} on OV-03: thermal path degrading` }).first();
    await expect(heading).toBeVisible(20000);
    await heading.scrollIntoViewIfNeeded();
    await j.checkA11y('alarms with the thermal flag');
    await j.shot('alarms-thermal-flag');
  },
};
