import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openBrowser } from './browser';

const baseUrl = inject('baseUrl');
const idpUrl = inject('idpUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
});

describe('hospital single sign-on (SAML 2.0, HTTP-Redirect out, HTTP-POST back)', () => {
  it('signs a new person in through the identity provider and holds them until a role is granted', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByRole('button', { name: /hospital SSO/ }).click();
    await page.waitForURL((url) => url.href.startsWith(idpUrl));
    await page.getByRole('radio', { name: /Sam Okoro/ }).check();
    await page.getByRole('button', { name: /Sign in and return/ }).click();
    await page.waitForURL(/\/no-role/);
    await page.getByRole('heading', { name: 'Waiting for a role' }).waitFor();
    const me = await page.evaluate(async () => (await fetch('/api/auth/me')).json());
    expect(me).toMatchObject({
      email: 'sam.okoro@north-hospital.test',
      roles: [],
      signInMethod: 'saml',
    });
  });
});
