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
const requestedUrls: string[] = [];

async function expectNoSeriousViolations(where: string): Promise<void> {
  const violations = await seriousAccessibilityViolations(page);
  const summary = violations.map(
    (v) =>
      `${v.id} (${v.impact}): ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
  );
  expect(summary, `axe-core on ${where}`).toEqual([]);
}

/** Types into the Material form field whose label reads `label`. */
async function fill(
  label: string,
  value: string,
  scope: Page | ReturnType<Page['locator']> = page,
): Promise<void> {
  await scope.getByLabel(label, { exact: true }).fill(value);
}

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
  page.on('request', (request) => requestedUrls.push(request.url()));
});
afterAll(async () => {
  await browser.close();
});

describe('a presenting physician prepares a case', () => {
  it('signs in', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    await expectNoSeriousViolations('the sign-in page');
    await fill('E-mail address', 'presenter@emberline.test');
    await fill('Password', 'ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/cases/);
    await page.getByRole('heading', { name: 'Cases' }).waitFor();
    await page.getByText('NLB-2026-014').waitFor();
    await expectNoSeriousViolations('the case register');
    await page.screenshot({ path: join(artefacts, 'case-register.png'), fullPage: true });
  });

  it('creates a case', async () => {
    await page.getByRole('button', { name: /New case/ }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByRole('heading', { name: 'New case' }).waitFor();
    await fill('Case code', 'NLB-2026-E2E', dialog);
    await dialog.getByLabel('Board', { exact: true }).click();
    await page.getByRole('option', { name: 'North Liver Board' }).click();
    await fill('Year of birth', '1957', dialog);
    await dialog.getByLabel('Sex', { exact: true }).click();
    await page.getByRole('option', { name: 'Female' }).click();
    await dialog.getByLabel('Primary diagnosis', { exact: true }).click();
    await page.getByRole('option', { name: 'Hepatocellular carcinoma' }).click();
    await dialog.getByRole('button', { name: /Create/ }).click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    await page.getByText('NLB-2026-E2E').first().waitFor();
  });

  it('enters a lab panel in SI units and sees MELD and Child-Pugh (Kim 2008 worked example → MELD 19, MELD-Na 20)', async () => {
    // Computed from the formulas [C] (UNOS/OPTN MELD; Kim WR et al., N Engl J Med 2008;359:1018):
    // Cr 2.7 mg/dL (238.68 µmol/L), bilirubin 1.5 mg/dL (25.65 µmol/L), INR 1.1,
    // Na 135 → MELD 19, MELD-Na 20; Child-Pugh standard table with albumin 30 g/L and mild
    // ascites → 7 points, class B.
    await fill('Total bilirubin', '25.65');
    await fill('Albumin', '30');
    await fill('Creatinine', '238.68');
    await fill('INR', '1.1');
    await fill('Sodium', '135');
    await fill('Platelets', '140');
    await page
      .getByRole('radiogroup', { name: 'Ascites' })
      .getByRole('radio', { name: 'Mild' })
      .click();
    await page
      .getByRole('radiogroup', { name: 'Hepatic encephalopathy' })
      .getByRole('radio', { name: 'None' })
      .click();
    await page.getByRole('button', { name: 'Add panel' }).click();
    const scores = page.getByRole('region', { name: 'Liver function' });
    await scores.getByText('7 points · class B').waitFor();
    const meld = scores.locator('.score', { has: page.locator('dt', { hasText: /^MELD$/ }) });
    const meldNa = scores.locator('.score', { has: page.locator('dt', { hasText: /^MELD-Na$/ }) });
    expect(await meld.locator('dd').innerText()).toBe('19');
    expect(await meldNa.locator('dd').innerText()).toBe('20');
    expect(await scores.getByText(/treating team decides/).count()).toBeGreaterThan(0);
    await expectNoSeriousViolations('the case file');
    await page.screenshot({ path: join(artefacts, 'case-file-summary.png'), fullPage: true });
  });

  it('keeps the scores after a reload', async () => {
    await page.reload();
    await page
      .getByRole('region', { name: 'Liver function' })
      .getByText('7 points · class B')
      .waitFor();
  });

  it('made no request outside 127.0.0.1', () => {
    const outside = requestedUrls.filter((url) => {
      const { protocol, hostname } = new URL(url);
      return !(protocol === 'data:' || protocol === 'blob:' || hostname === '127.0.0.1');
    });
    expect(requestedUrls.length).toBeGreaterThan(5);
    expect(outside).toEqual([]);
  });
});
