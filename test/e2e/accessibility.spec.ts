import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { openBrowser } from './browser';

/**
 * Every screen, visited as a new user would (a fresh browser profile, the demo accounts), passes
 * axe-core with no serious or critical violation. axe-core's rules follow WCAG 2.2 A and AA and
 * its own best practices; serious and critical are its two highest impact levels.
 */

const require = createRequire(import.meta.url);
const axeSource = readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;

/** The demo case with a series, structures and assessed plans (server/seeders/). */
const assessedCase = 'NLB-2026-014';
/** The demo case the board decided (TACE), in the coordinator's queue. */
const decidedCase = 'NLB-2026-022';

interface AxeViolation {
  id: string;
  impact: 'minor' | 'moderate' | 'serious' | 'critical' | null;
  help: string;
  nodes: { target: string[] }[];
}

/** Every violation axe-core finds on the page as it stands. */
async function violationsOnPage(): Promise<AxeViolation[]> {
  // Evaluated over the DevTools protocol: the app's CSP (script-src 'self') stays in force.
  await page.evaluate(axeSource);
  return page.evaluate(async () => {
    const axe = (
      window as unknown as {
        axe: { run: (context: Document) => Promise<{ violations: AxeViolation[] }> };
      }
    ).axe;
    return (await axe.run(document)).violations;
  });
}

function describeViolation(violation: AxeViolation): string {
  const where = violation.nodes.map((node) => node.target.join(' ')).join(', ');
  return `${violation.id} (${violation.impact ?? 'no impact'}): ${violation.help} at ${where}`;
}

/**
 * No serious or critical violation on the screen; `alsoRules` names rules that must not fail at
 * any impact (a landmark named twice is "moderate" to axe but confuses navigation by region).
 */
async function expectAccessible(screen: string, alsoRules: readonly string[] = []): Promise<void> {
  const violations = await violationsOnPage();
  const failing = violations.filter(
    (violation) =>
      violation.impact === 'serious' ||
      violation.impact === 'critical' ||
      alsoRules.includes(violation.id),
  );
  expect(failing.map(describeViolation), `axe-core on ${screen}`).toEqual([]);
}

async function signIn(email: string): Promise<void> {
  await page.getByLabel('E-mail address', { exact: true }).fill(email);
  await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
}

/** The case file's section tab, then its content's heading. */
async function openSection(tab: string, heading: string): Promise<void> {
  await page.getByRole('tab', { name: tab, exact: true }).click();
  await page.getByRole('heading', { name: heading, exact: true }).waitFor();
}

/**
 * Waits for the plan comparison, which needs an assessed plan: the seed queues the demo
 * assessments and the server works them as it starts. The list is read afresh every 60 s, as a
 * user would reload; should no assessment be under way, a plan not assessed yet is assessed on
 * request.
 */
async function waitForComparison(): Promise<void> {
  const table = page.locator('em-plan-comparison table.comparison');
  const started = Date.now();
  let readAt = started;
  let hasRequested = false;
  while (!(await table.count())) {
    if (Date.now() - started > 240_000) throw new Error('no assessed plan after 240 s');
    const isWaiting = (await page.locator('em-assessment-progress').count()) > 0;
    const notAssessed = page.locator('section.plan', { hasText: 'Not assessed yet.' });
    if (!hasRequested && !isWaiting && (await notAssessed.count())) {
      await notAssessed.first().getByRole('button', { name: 'Request assessment' }).click();
      hasRequested = true;
    }
    if (Date.now() - readAt > 60_000) {
      readAt = Date.now();
      await page.reload();
      await page.getByRole('heading', { name: 'Needle plans' }).waitFor({ timeout: 30_000 });
    }
    await page.waitForTimeout(1000);
  }
}

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
});

describe('every screen has no serious or critical accessibility violation', () => {
  it('the sign-in page', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    await expectAccessible('the sign-in page');
  });

  it('the case register', async () => {
    await signIn('presenter@emberline.test');
    await page.waitForURL(/\/cases/);
    await page.getByRole('heading', { name: 'Cases' }).waitFor();
    await page.getByText(assessedCase).first().waitFor();
    await expectAccessible('the case register');
  });

  it('the case file’s summary', async () => {
    await page.getByText(assessedCase).first().click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    await page.getByRole('heading', { name: `Case ${assessedCase}` }).waitFor();
    await page.getByRole('region', { name: 'Liver function' }).waitFor();
    await expectAccessible('the case file’s summary');
  });

  it('the case file’s imaging', async () => {
    await openSection('Imaging', 'Image series');
    await page
      .getByRole('link', { name: /Open the viewer for series/ })
      .first()
      .waitFor();
    await expectAccessible('the case file’s imaging');
  });

  it('the viewer, open on the case’s series', { timeout: 120_000 }, async () => {
    await page
      .getByRole('link', { name: /Open the viewer for series/ })
      .first()
      .click();
    await page.waitForURL(/\/imaging\/[0-9a-f-]{36}\/viewer/);
    await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 90_000 });
    await expectAccessible('the viewer');
  });

  it('the case file’s plans with the comparison', { timeout: 300_000 }, async () => {
    await page.goBack();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}\/imaging$/);
    await openSection('Plans', 'Needle plans');
    await waitForComparison();
    await page.getByRole('heading', { name: /^Plan comparison/ }).waitFor();
    // The comparison's table scrolls in a region of its own: one name for one landmark.
    await expectAccessible('the case file’s plans', ['landmark-unique']);
  });

  it('the boards and a board', async () => {
    await page.getByRole('link', { name: 'Boards', exact: true }).click();
    await page.getByRole('heading', { name: 'Boards', level: 1 }).waitFor();
    await page.getByRole('link', { name: 'North Liver Board' }).waitFor();
    await expectAccessible('the boards');
    await page.getByRole('link', { name: 'North Liver Board' }).click();
    await page.getByRole('heading', { name: 'Members' }).waitFor();
    await page.getByRole('heading', { name: 'North Liver Board', level: 1 }).waitFor();
    await expectAccessible('a board');
  });

  it('the account', async () => {
    await page.goto(`${baseUrl}/account`);
    await page.getByRole('heading', { name: 'Your account' }).waitFor();
    await page.getByRole('heading', { name: 'Second factor' }).waitFor();
    await expectAccessible('the account');
  });

  it('the administration’s users', async () => {
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in/);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    await signIn('admin@emberline.test');
    await page.goto(`${baseUrl}/admin/users`);
    await page.getByRole('heading', { name: 'Users' }).waitFor();
    await page.getByText('presenter@emberline.test', { exact: true }).waitFor();
    await expectAccessible('the administration’s users');
  });

  it('the administration’s boards', async () => {
    await page.getByRole('tab', { name: 'Boards' }).click();
    await page.getByRole('heading', { name: 'New board' }).waitFor();
    await page.getByText('North Liver Board').first().waitFor();
    await expectAccessible('the administration’s boards');
  });

  it('the administration’s applicator profiles and a profile’s dialog', async () => {
    await page.getByRole('tab', { name: 'Applicator profiles' }).click();
    await page.getByRole('heading', { name: 'Applicator profiles' }).waitFor();
    await page.getByRole('row').filter({ hasText: 'version' }).first().waitFor();
    await expectAccessible('the applicator profiles');

    await page.getByRole('button', { name: 'New profile' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByText('A new profile starts at version 1.').waitFor();
    await expectAccessible('the new applicator profile dialog');
    await dialog.getByRole('button', { name: 'Cancel' }).click();
    await dialog.waitFor({ state: 'detached' });
  });

  it('the administration’s safety profiles and a profile’s dialog', async () => {
    await page.getByRole('tab', { name: 'Safety profiles' }).click();
    await page.getByRole('heading', { name: 'Safety profiles' }).waitFor();
    await page.getByRole('row').filter({ hasText: 'Default for new assessments' }).waitFor();
    await expectAccessible('the safety profiles');

    // A second profile, so that the list shows a "Make default" button too.
    await page.getByRole('button', { name: 'New profile' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByText('A new profile starts at version 1.').waitFor();
    await expectAccessible('the new safety profile dialog');
    await dialog.getByLabel('Name', { exact: true }).fill('Accessibility check thresholds');
    await dialog.getByRole('button', { name: 'Create profile' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page
      .getByRole('button', { name: 'Make default: Accessibility check thresholds' })
      .waitFor();
    await expectAccessible('the safety profiles with a profile that is not the default');

    await page.getByRole('button', { name: 'Edit Accessibility check thresholds' }).click();
    await dialog.getByText('Version 1.', { exact: false }).waitFor();
    await expectAccessible('the safety profile dialog');
    await dialog.getByRole('button', { name: 'Cancel' }).click();
    await dialog.waitFor({ state: 'detached' });
  });

  it('the administration’s audit log', async () => {
    await page.getByRole('tab', { name: 'Audit log' }).click();
    await page.getByRole('heading', { name: 'Audit log' }).waitFor();
    await page.locator('tr.mat-mdc-row').first().waitFor();
    await expectAccessible('the audit log');
  });

  it('the administration’s checklist thresholds and a threshold’s dialog', async () => {
    await page.getByRole('tab', { name: 'Checklist thresholds' }).click();
    await page.getByRole('heading', { name: 'Checklist thresholds' }).waitFor();
    await page.locator('tr.mat-mdc-row').first().waitFor();
    await expectAccessible('the checklist thresholds');
    await page
      .getByRole('button', { name: /^Edit / })
      .first()
      .click();
    const dialog = page.getByRole('dialog');
    await dialog.getByLabel('Source of the value').waitFor();
    await expectAccessible('the threshold dialog');
    await dialog.getByRole('button', { name: 'Cancel' }).click();
    await dialog.waitFor({ state: 'detached' });
  });

  it('the coordinator’s bookings and a case’s logistics', async () => {
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in/);
    await signIn('coordinator@emberline.test');
    await page.goto(`${baseUrl}/bookings`);
    await page.getByRole('heading', { name: 'Bookings', level: 1 }).waitFor();
    // The demo's decided case (server/seeders/demo-meetings.ts), with or without a booking.
    await page.getByRole('checkbox', { name: 'Show booked' }).check();
    await page.getByRole('link', { name: decidedCase, exact: true }).first().waitFor();
    await expectAccessible('the booking queue');
    await page.getByRole('link', { name: decidedCase, exact: true }).first().click();
    await page.waitForURL(/\/logistics/);
    await page.getByRole('heading', { name: 'Procedure', exact: true }).waitFor();
    await expectAccessible('the case file’s logistics');
  });
});
