import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openBrowser, seriousAccessibilityViolations } from './browser';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;

// Names of the invented demo profiles (server/seeders/demo-plans.ts).
const microwave = 'Demo microwave 14 G (invented)';
const radiofrequency = 'Demo radiofrequency 17 G (invented)';
const demoThresholds = 'Demo default thresholds (invented)';

async function expectNoSeriousViolations(where: string): Promise<void> {
  const violations = await seriousAccessibilityViolations(page);
  const summary = violations.map(
    (v) =>
      `${v.id} (${v.impact}): ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
  );
  expect(summary, `axe-core on ${where}`).toEqual([]);
}

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
});

describe('an administrator looks after the applicator and safety profiles', () => {
  it('signs in and sees the demo applicator profiles with the caution beside them', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByLabel('E-mail address', { exact: true }).fill('admin@emberline.test');
    await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
    await page.goto(`${baseUrl}/admin/applicator-profiles`);
    await page.getByRole('heading', { name: 'Applicator profiles' }).waitFor();
    const row = page.getByRole('row').filter({ hasText: microwave });
    await expect.poll(() => row.textContent()).toContain('9 rows');
    await page.getByText('The demo profiles are invented values').waitFor();
    await expectNoSeriousViolations('the applicator profiles');
    await page.screenshot({
      path: join(artefacts, 'admin-applicator-profiles.png'),
      fullPage: true,
    });
  });

  it('flags a repeated power and time in the zone table, and shows the server’s name conflict', async () => {
    await page.getByRole('button', { name: `Edit ${microwave}` }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByRole('heading', { name: `Edit ${microwave}` }).waitFor();
    // Row 2 of the demo table is 40 W for 360 s; 180 s repeats row 1 (40 W for 180 s).
    await dialog.getByLabel('Time (s), row 2', { exact: true }).fill('180');
    await dialog.getByText('Row 2 repeats 40 W for 180 s of row 1').waitFor();
    await expectNoSeriousViolations('the applicator profile dialog');
    await page.screenshot({ path: join(artefacts, 'admin-zone-table.png') });
    await dialog.getByLabel('Time (s), row 2', { exact: true }).fill('360');
    await dialog.getByLabel('Name', { exact: true }).fill(radiofrequency);
    await dialog.getByRole('button', { name: 'Save profile' }).click();
    await dialog.getByText('choose another name').waitFor();
    await dialog.getByRole('button', { name: 'Cancel' }).click();
    await dialog.waitFor({ state: 'detached' });
  });

  it('lists the safety profiles with the default marked and the sources kept', async () => {
    await page.getByRole('tab', { name: 'Safety profiles' }).click();
    await page.getByRole('heading', { name: 'Safety profiles' }).waitFor();
    const row = page.getByRole('row').filter({ hasText: demoThresholds });
    await expect.poll(() => row.textContent()).toContain('Default for new assessments');
    await expectNoSeriousViolations('the safety profiles');
    await page.screenshot({ path: join(artefacts, 'admin-safety-profiles.png'), fullPage: true });

    await page.getByRole('button', { name: 'New profile' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByText(`Starts from the values of ${demoThresholds}`).waitFor();
    await dialog.getByLabel('Name', { exact: true }).fill('E2E wider margins');
    await dialog.getByLabel('Margin target (mm)', { exact: true }).fill('10');
    await dialog.getByRole('button', { name: 'Create profile' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page.getByRole('button', { name: 'Make default: E2E wider margins' }).click();
    await page.getByText('E2E wider margins is now the default for new assessments.').waitFor();
    const created = page.getByRole('row').filter({ hasText: 'E2E wider margins' });
    await expect.poll(() => created.textContent()).toContain('Default for new assessments');
    await expect.poll(() => created.textContent()).toContain('10 / 0 mm');

    // Later suites share this database: the demo thresholds become the default again.
    await page.getByRole('button', { name: `Make default: ${demoThresholds}` }).click();
    await page.getByText(`${demoThresholds} is now the default for new assessments.`).waitFor();
  });
});
