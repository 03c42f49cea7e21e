/**
 * A presenter corrects a mistyped lab panel of a draft case and sees the scores follow the
 * correction, the old panel kept in the history, struck through with the reason. Values checked
 * against the MELD worked examples computed from the formulas (UNOS/OPTN MELD policy; Kim WR et
 * al., N Engl J Med 2008;359:1018) and the Child–Pugh table (Pugh RN et al., Br J Surg
 * 1973;60:646; INR bands common practice).
 */
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openBrowser } from './browser';

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;

async function fill(label: string, value: string): Promise<void> {
  await page.getByLabel(label, { exact: true }).fill(value);
}

async function score(name: string): Promise<string> {
  const scores = page.getByRole('region', { name: 'Liver function' });
  const row = scores.locator('.score', {
    has: page.locator('dt', { hasText: new RegExp(`^${name}$`) }),
  });
  return row.locator('dd').innerText();
}

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
});

describe('a presenter corrects a lab panel', () => {
  it('adds a panel: Cr 2.7, bilirubin 1.5 mg/dL, INR 1.1, Na 135 → MELD 19, MELD-Na 20', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await fill('E-mail address', 'presenter@emberline.test');
    await fill('Password', 'ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/cases/);
    await page.getByText('NLB-2026-019').first().click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    await page.getByRole('heading', { name: 'Laboratory values' }).waitFor();

    await fill('Total bilirubin', '25.65'); // 1.5 mg/dL × 17.1
    await fill('Albumin', '30');
    await fill('Creatinine', '238.68'); // 2.7 mg/dL × 88.4
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
    await page
      .getByRole('region', { name: 'Liver function' })
      .getByText('7 points · class B')
      .waitFor();
    expect(await score('MELD')).toBe('19');
    expect(await score('MELD-Na')).toBe('20');
  });

  it('corrects it: Cr 1.4, bilirubin 3.2 mg/dL, INR 1.8, Na 134 → MELD 21, MELD-Na 23, Child–Pugh 10 (C)', async () => {
    const today = new Date().toLocaleDateString('en-GB', {
      day: 'numeric',
      month: 'short',
      year: 'numeric',
    });
    await page
      .getByRole('button', { name: `Correct the panel taken ${today}` })
      .first()
      .click();
    await page.getByRole('heading', { name: /Correct the panel taken/ }).waitFor();
    await fill('Total bilirubin', '54.72'); // 3.2 mg/dL × 17.1
    await fill('Creatinine', '123.76'); // 1.4 mg/dL × 88.4
    await fill('INR', '1.8');
    await fill('Sodium', '134');
    await fill('Reason for the correction', 'Values typed from another report');
    await page.getByRole('button', { name: 'Save correction' }).click();

    await page
      .getByRole('region', { name: 'Liver function' })
      .getByText('10 points · class C')
      .waitFor();
    expect(await score('MELD')).toBe('21');
    expect(await score('MELD-Na')).toBe('23');
    const superseded = page.locator('tr.retired', { hasText: 'Superseded' });
    await superseded.waitFor();
    expect(await superseded.innerText()).toContain('Values typed from another report');
  });
});
