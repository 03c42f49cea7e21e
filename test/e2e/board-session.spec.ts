/**
 * The board meets, end to end in headless Chromium with a browser context per member: the chair
 * opens the seeded North meeting, the presenter leads and a member follows (the follower's slice
 * follows the lead's), the member votes and the presenter sees the tally, the proceduralist signs
 * the decision with the password, the case is read-only afterwards, and the minutes frozen at the
 * close show the decision. Rules of the product (DEVELOPERS.md, "The board session").
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openBrowser } from './browser';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });
const baseUrl = inject('baseUrl');

type Browser = Awaited<ReturnType<typeof openBrowser>>;
const browsers: Browser[] = [];
let chair: Page;
let presenter: Page;
let member: Page;
let meetingUrl = '';

async function signedIn(email: string): Promise<Page> {
  const browser = await openBrowser();
  browsers.push(browser);
  const page = browser.page;
  await page.setViewportSize({ width: 1440, height: 900 });
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail address', { exact: true }).fill(email);
  await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.waitForURL(/\/cases/);
  return page;
}

/** The crosshair read-out of the room's viewer, e.g. "LPS (1.0, -2.0, 30.5) mm …". */
async function crosshair(page: Page): Promise<string> {
  const text = await page.locator('[data-readout="crosshair"] dd').first().textContent();
  return (text ?? '').replace(/\s+/g, ' ').trim().split(' · ')[0];
}

beforeAll(async () => {
  chair = await signedIn('proceduralist@emberline.test');
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
});
afterAll(async () => {
  for (const browser of browsers) await browser.close();
});

describe('a board session', () => {
  it('is opened by the chair, who sees quorum not yet met', async () => {
    await chair.goto(`${baseUrl}/meetings`);
    // The seeded upcoming meeting: its link is its date and time.
    await chair.locator('li', { hasText: 'Scheduled' }).getByRole('link').first().click();
    await chair.waitForURL(/\/meetings\/[0-9a-f-]{36}$/);
    meetingUrl = chair.url();
    await chair.getByRole('button', { name: 'Open the board session' }).click();
    await chair.getByTestId('follow-state').waitFor();
    await chair.locator('[data-connection="connected"]').waitFor();
    await expect
      .poll(() => chair.getByTestId('quorum').textContent())
      .toMatch(/Not met: missing Hepatology, Diagnostic radiology/);
  });

  it('is led by the presenter, and the member follows the lead’s slice', async () => {
    await presenter.goto(meetingUrl);
    await presenter.getByText('You lead the review').waitFor({ timeout: 30_000 });
    await member.goto(meetingUrl);
    await member.getByText('Following Dr Priya Raman').waitFor({ timeout: 30_000 });
    await expect.poll(() => member.getByTestId('quorum').textContent()).toMatch(/Met:/);
    for (const page of [presenter, member]) {
      await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 60_000 });
    }
    await member.screenshot({ path: join(artefacts, 'board-room-follower.png') });
    const axial = presenter.locator('em-slice-view[view="axial"] [tabindex="0"]').first();
    await axial.focus();
    for (let step = 0; step < 6; step += 1) await axial.press('PageUp');
    // The lead's read-out settles on its next frame: six slices of 2.5 mm up from the centre
    // slice at −10 mm (the demo grid, sample-data/README.md) is +5 mm.
    await expect.poll(() => crosshair(presenter), { timeout: 10_000 }).toMatch(/, 5\.0\) mm$/);
    const lead = await crosshair(presenter);
    await expect.poll(() => crosshair(member), { timeout: 10_000 }).toBe(lead);
    // All four panes of the room's viewer are in the window, without scrolling.
    const panes = await member
      .locator('em-slice-view, em-volume-view')
      .evaluateAll((elements) => elements.map((element) => element.getBoundingClientRect().bottom));
    expect(panes).toHaveLength(4);
    for (const bottom of panes) expect(bottom).toBeLessThanOrEqual(900);
  });

  it('shows the presenter the member’s vote in the live tally', async () => {
    await member.getByRole('button', { name: 'Show every treatment' }).click();
    const row = member.getByRole('row', { name: /Microwave ablation/ });
    await row
      .getByRole('radio', { name: 'Support' })
      .or(row.getByRole('button', { name: 'Support' }))
      .click();
    await presenter.getByRole('button', { name: 'Show every treatment' }).click();
    await expect
      .poll(() =>
        presenter.locator('td[data-option="ablation-mw"][data-position="support"]').textContent(),
      )
      .toMatch(/^\s*1\s*$/);
    await presenter.screenshot({ path: join(artefacts, 'board-room-lead.png') });
  });

  it('lets the proceduralist sign the decision with the password; the case is read-only after', async () => {
    // Signed in the room, over its socket: the signer stays present, so quorum holds.
    await chair.getByRole('button', { name: 'Record the decision' }).click();
    await chair.getByRole('combobox', { name: 'Outcome' }).click();
    await chair.getByRole('option', { name: /TACE/ }).click();
    await chair
      .getByLabel('Rationale', { exact: true })
      .fill('Invented scenario: the board prefers chemoembolisation before any ablation.');
    await chair.getByLabel('Your password', { exact: true }).fill('ember-demo-2026');
    await chair.getByRole('button', { name: 'Sign and record the decision' }).click();
    await chair.getByText('Voting has closed on this case.').waitFor({ timeout: 20_000 });
    // Everyone in the room sees the item close.
    await member.getByText(/voting has closed/).waitFor({ timeout: 20_000 });
    await chair.getByRole('link', { name: 'Read its decision' }).click();
    await chair.locator('[data-decision] .outcome').waitFor({ timeout: 20_000 });
    expect(await chair.locator('[data-decision] .outcome').textContent()).toMatch(/TACE/);
    await chair.screenshot({ path: join(artefacts, 'decision-signed.png'), fullPage: true });
    await chair.getByRole('tab', { name: 'Summary' }).click();
    await chair.getByRole('heading', { name: 'Laboratory values' }).waitFor();
    // The record the board saw is frozen: nothing is edited, corrected or withdrawn...
    expect(await chair.getByRole('button', { name: 'Save changes' }).count()).toBe(0);
    expect(await chair.getByRole('button', { name: /^(Correct|Withdraw)/ }).count()).toBe(0);
    // ...but the proceduralist records pre-procedure labs as a new panel beside it.
    await chair.getByText(/Pre-procedure labs: a new panel is added/).waitFor();
    expect(await chair.getByRole('button', { name: 'Add panel' }).count()).toBe(1);
  });

  it('closes with frozen minutes that show the decision', async () => {
    await chair.goto(meetingUrl);
    await chair.getByRole('button', { name: 'Close the meeting' }).click();
    await chair.getByRole('button', { name: 'Close and freeze the minutes' }).click();
    await chair.waitForURL(/\/minutes$/);
    const decision = chair.getByTestId('minutes-decision');
    await decision.first().waitFor({ timeout: 20_000 });
    expect(await decision.first().textContent()).toMatch(/TACE.*Dr Mei Tanaka/s);
    await chair.screenshot({ path: join(artefacts, 'minutes.png'), fullPage: true });
  });
});
