/**
 * Logistics after the board's decision, end to end in headless Chromium: the nurse coordinator
 * opens the queue, books the demo's decided case (NLB-2026-022, TACE, signed by the seeded
 * meeting: server/seeders/demo-meetings.ts) from it, works through the pre-procedure checklist
 * (ticks the manual items, overrides the automatic ones the record does not meet, with reasons)
 * and confirms; the care team's mail with its calendar invitation (RFC 5545, invitation.ics)
 * reaches the test mailbox; the operator marks the procedure done; the case's follow-up imaging
 * then waits in the coordinator's queue, and is booked from it on the proposed day. The spec needs nothing from the other specs: the queue
 * line is found by its case code, whatever else is booked.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openBrowser, seriousAccessibilityViolations } from './browser';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });
const baseUrl = inject('baseUrl');

/** The demo's decided case and the North board's proceduralist (server/seeders/demo-seed.ts). */
const caseCode = 'NLB-2026-022';
const operatorName = 'Dr Mei Tanaka';

type Browser = Awaited<ReturnType<typeof openBrowser>>;
const browsers: Browser[] = [];
let coordinator: Page;
let operator: Page;
let logisticsUrl = '';

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

async function expectNoSeriousViolations(page: Page, where: string): Promise<void> {
  const violations = await seriousAccessibilityViolations(page);
  const summary = violations.map(
    (v) =>
      `${v.id} (${v.impact}): ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
  );
  expect(summary, `axe-core on ${where}`).toEqual([]);
}

/** A local date and time as `<input type="datetime-local">` takes it. */
function localInput(date: Date): string {
  const pad = (value: number) => String(value).padStart(2, '0');
  return (
    `${date.getFullYear()}-${pad(date.getMonth() + 1)}-${pad(date.getDate())}` +
    `T${pad(date.getHours())}:${pad(date.getMinutes())}`
  );
}

/** Picks an option of the Material select labelled `label`. */
async function choose(page: Page, label: string, option: string): Promise<void> {
  await page.getByRole('combobox', { name: label }).click();
  await page.getByRole('option', { name: option }).click();
}

/** "closed", or what the open dialog says went wrong (its alert), so that a failure names it. */
async function dialogState(page: Page): Promise<string> {
  const dialog = page.getByRole('dialog');
  if (!(await dialog.count())) return 'closed';
  const alert = dialog.getByRole('alert');
  return (await alert.count()) ? `open: ${(await alert.first().textContent()) ?? ''}` : 'open';
}

/** The queue's row of the case, among all lines (booked ones shown too). */
function queueRow(page: Page) {
  return page.locator('tr[data-queue-row]', { hasText: caseCode });
}

beforeAll(async () => {
  coordinator = await signedIn('coordinator@emberline.test');
  operator = await signedIn('proceduralist@emberline.test');
});
afterAll(async () => {
  for (const browser of browsers) await browser.close();
});

describe('the coordinator books a decided case', () => {
  it('finds it in the queue with the decision’s conditions, and books it', async () => {
    await coordinator.getByRole('link', { name: 'Bookings', exact: true }).click();
    await coordinator.getByRole('heading', { name: 'Bookings', level: 1 }).waitFor();
    const row = queueRow(coordinator);
    await row.waitFor();
    expect(await row.textContent()).toMatch(/TACE/);
    expect(await row.textContent()).toMatch(/Contrast CT four weeks after the second session/);
    await expectNoSeriousViolations(coordinator, 'the booking queue');
    await coordinator.screenshot({ path: join(artefacts, 'booking-queue.png'), fullPage: true });

    await row.getByRole('link', { name: `Book procedure for ${caseCode}` }).click();
    await coordinator.waitForURL(/\/cases\/[0-9a-f-]{36}\/logistics/);
    logisticsUrl = coordinator.url().replace(/\?.*$/, '');
    const dialog = coordinator.getByRole('dialog');
    await dialog.getByRole('heading', { name: /Book the procedure/ }).waitFor();
    await expectNoSeriousViolations(coordinator, 'the booking dialog');

    // Tomorrow at nine, local time: the laboratory and imaging ages count back from the start.
    const start = new Date();
    start.setDate(start.getDate() + 1);
    start.setHours(9, 0, 0, 0);
    await dialog.getByLabel('Starts at').fill(localInput(start));
    await dialog.getByLabel('Duration (minutes)').fill('90');
    await dialog.getByLabel('Room').fill('Angiography suite 1');
    await choose(coordinator, 'Operator', operatorName);
    await choose(coordinator, 'Anaesthesia', 'Sedation');
    await dialog.getByRole('button', { name: 'Book', exact: true }).click();
    await expect.poll(() => dialogState(coordinator), { timeout: 15_000 }).toBe('closed');

    const state = coordinator.locator('[data-booking="procedure"] [data-booking-state]');
    await expect
      .poll(() => state.textContent(), { timeout: 15_000 })
      .toMatch(/Booked, checklist open/);
    expect(await coordinator.locator('[data-booking="procedure"]').textContent()).toMatch(
      new RegExp(`Angiography suite 1[\\s\\S]*${operatorName}[\\s\\S]*Sedation`),
    );
  });

  it('works through the checklist, under its caution, and confirms', async () => {
    const checklist = coordinator.locator('em-checklist-panel');
    await checklist.getByRole('heading', { name: 'Pre-procedure checklist' }).waitFor();
    expect(await checklist.textContent()).toMatch(/supports, and never replaces/);
    const confirm = checklist.getByRole('button', { name: 'Confirm booking' });
    expect(await confirm.isDisabled()).toBe(true);

    for (const label of [
      'Written consent obtained',
      'Plan for anticoagulant and antiplatelet drugs agreed',
      'Fasting instructions given',
    ]) {
      const box = checklist.getByRole('checkbox', { name: label });
      await box.check();
      await expect.poll(() => box.isChecked(), { timeout: 15_000 }).toBe(true);
    }

    // Whatever the demo record does not meet (the seeded panel's age, say) is overridden with
    // a reason; each override reads the checklist again.
    for (let round = 0; round < 8; round += 1) {
      const override = checklist.getByRole('button', { name: /^Override .*…$/ });
      if (!(await override.count())) break;
      await override.first().click();
      const dialog = coordinator.getByRole('dialog');
      await dialog.getByRole('button', { name: 'Override', exact: true }).click();
      // No reason: the dialog refuses and says what is missing.
      await dialog.getByText('Required').waitFor();
      await dialog
        .getByLabel('Reason for the override')
        .fill('Repeat bloods and imaging are booked for the morning of the procedure.');
      await dialog.getByRole('button', { name: 'Override', exact: true }).click();
      await expect.poll(() => dialogState(coordinator), { timeout: 15_000 }).toBe('closed');
      await checklist.locator('.override').nth(round).waitFor();
    }
    await expectNoSeriousViolations(coordinator, 'the case file’s logistics');
    await coordinator.screenshot({
      path: join(artefacts, 'logistics-checklist.png'),
      fullPage: true,
    });

    await expect.poll(() => confirm.isDisabled(), { timeout: 15_000 }).toBe(false);
    await confirm.click();
    const state = coordinator.locator('[data-booking="procedure"] [data-booking-state]');
    await expect.poll(() => state.textContent(), { timeout: 15_000 }).toMatch(/^\s*Confirmed\s*$/);
  });

  it('e-mails the care team an invitation, caught by the test mailbox', async () => {
    await coordinator.getByRole('link', { name: 'Test mailbox', exact: true }).click();
    await coordinator.getByRole('heading', { name: 'Test mailbox' }).waitFor();
    const message = coordinator.locator('tr.mat-mdc-row', {
      hasText: `Procedure booked: ${caseCode}`,
    });
    // Sent by the mail queue's worker a moment later: read the mailbox again until it is there.
    await expect
      .poll(
        async () => {
          if (await message.count()) return true;
          await coordinator.getByRole('button', { name: 'Refresh' }).click();
          await coordinator.waitForTimeout(1000);
          return false;
        },
        { timeout: 60_000, interval: 500 },
      )
      .toBe(true);
    const invitation = message.first().getByRole('link', { name: /invitation\.ics/ });
    await invitation.waitFor();
    const href = await invitation.getAttribute('href');
    const ics = await coordinator.evaluate(
      async (url) => (await fetch(url ?? '')).text(),
      href ?? '',
    );
    // RFC 5545: a calendar object with a method and one event.
    expect(ics).toMatch(/BEGIN:VCALENDAR/);
    expect(ics).toMatch(/METHOD:REQUEST/);
    expect(ics).toMatch(/BEGIN:VEVENT[\s\S]*LOCATION:Angiography suite 1[\s\S]*END:VEVENT/);
    expect(await message.first().textContent()).toMatch(/proceduralist@emberline\.test/);
  });
});

describe('the operator records the procedure', () => {
  it('marks the procedure done, with a graded complication described', async () => {
    await operator.goto(logisticsUrl);
    await operator.getByRole('heading', { name: 'Procedure', exact: true }).waitFor();
    await operator.getByRole('button', { name: 'Mark procedure done' }).click();
    const dialog = operator.getByRole('dialog');
    await dialog.getByRole('heading', { name: /Mark the procedure done/ }).waitFor();
    expect(await dialog.textContent()).toMatch(/Clavien–Dindo/);

    const performed = new Date(Date.now() - 60 * 60_000);
    await dialog.getByLabel('Performed at').fill(localInput(performed));
    await dialog.getByLabel('Applicators used').fill('Demo microcatheter 2.7 Fr');
    await choose(
      operator,
      'Complication grade',
      'Grade I: off the usual course, managed with simple measures only (no specific treatment)',
    );
    await dialog.getByRole('button', { name: 'Record the procedure' }).click();
    // A graded complication needs its description.
    await dialog.getByText('Describe the complication').waitFor();
    await dialog
      .locator('#treatment-complication-note')
      .fill('Nausea after embolisation, settled with an antiemetic.');
    await dialog.getByRole('button', { name: 'Record the procedure' }).click();
    await expect.poll(() => dialogState(operator), { timeout: 15_000 }).toBe('closed');

    const record = operator.locator('[data-treatment]');
    await record.waitFor();
    expect(await record.textContent()).toMatch(/Demo microcatheter 2\.7 Fr/);
    expect(await record.textContent()).toMatch(/Grade I/);
    expect(await record.textContent()).toMatch(/Follow-up imaging proposed[\s\S]*Basis:/);
    await operator.screenshot({ path: join(artefacts, 'logistics-treated.png'), fullPage: true });
  });
});

describe('the follow-up', () => {
  it('waits in the coordinator’s queue, and is booked from there', async () => {
    await coordinator.goto(`${baseUrl}/bookings`);
    await coordinator.getByRole('heading', { name: 'Bookings', level: 1 }).waitFor();
    const row = queueRow(coordinator);
    await row.waitFor();
    expect(await row.textContent()).toMatch(/Follow-up imaging/);
    await row.getByRole('link', { name: `Book follow-up imaging for ${caseCode}` }).click();
    await coordinator.waitForURL(/\/logistics/);
    const dialog = coordinator.getByRole('dialog');
    await dialog.getByRole('heading', { name: /Book the follow-up imaging/ }).waitFor();
    // The start is offered on the proposed day.
    expect(await dialog.getByLabel('Starts at').inputValue()).toMatch(/^\d{4}-\d{2}-\d{2}T09:00$/);
    await dialog.getByLabel('Room').fill('CT room 2');
    await dialog.getByRole('button', { name: 'Book', exact: true }).click();
    await expect.poll(() => dialogState(coordinator), { timeout: 15_000 }).toBe('closed');
    const followUp = coordinator.locator('[data-booking="follow-up-imaging"]');
    await followUp.waitFor();
    expect(await followUp.textContent()).toMatch(/CT room 2[\s\S]*Contrast-enhanced CT/);
  });
});
