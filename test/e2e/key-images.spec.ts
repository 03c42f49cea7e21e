/**
 * Key images end to end: a board member opens the viewer of the demo case NLB-2026-014, keeps
 * the axial view with a caption, finds it in the Discussion section, checks the stored PNG
 * (decoded by `png-pixels.ts`, PNG ISO/IEC 15948) holds the picture and the crosshair drawn
 * over it, and removes it after the confirmation.
 *
 * What "not blank" means here: a CT slice in a soft-tissue window has many grey levels, so the
 * picture must hold many distinct colours; and the crosshair is drawn by the SVG overlay (not by
 * vtk.js), so its dashed line in the overlay's colour must show where the overlay drew it.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { openBrowser } from './browser';
import { decodePng, type DecodedPng } from './png-pixels';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
const caption = 'E2E key view through the tumour';

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
});

/**
 * Whether a pixel within one pixel of (x, y) carries the crosshair's warm tint. The crosshair
 * (slice-view.scss: rgb(255 179 120) at 70 %, 1 px wide) lies on pixel edges and is smoothed over
 * the two rows or columns beside it; grey CT pixels have r ≈ g ≈ b and the slate background is
 * bluish, so red above green above blue by a margin comes from the overlay.
 */
function isCrosshairLike(image: DecodedPng, x: number, y: number): boolean {
  for (let dy = -1; dy <= 1; dy++) {
    for (let dx = -1; dx <= 1; dx++) {
      const px = Math.min(image.width - 1, Math.max(0, Math.round(x) + dx));
      const py = Math.min(image.height - 1, Math.max(0, Math.round(y) + dy));
      const at = (py * image.width + px) * image.channels;
      const [r, g, b] = [image.data[at], image.data[at + 1], image.data[at + 2]];
      if (r - b > 30 && r > g && g > b) return true;
    }
  }
  return false;
}

describe('keeping a view of the viewer as a key image', () => {
  let caseUrl = '';
  let crosshair = { x1: 0, y1: 0, x2: 0, y2: 0 };
  let hostSize = { width: 0, height: 0 };

  it('opens the viewer of the demo case as a board member', { timeout: 120_000 }, async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByLabel('E-mail address', { exact: true }).fill('member@emberline.test');
    await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/cases/);
    await page.getByText('NLB-2026-014').first().click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    caseUrl = /^.*\/cases\/[0-9a-f-]{36}/.exec(page.url())?.[0] ?? '';
    await page.getByRole('tab', { name: 'Imaging' }).click();
    await page
      .getByRole('link', { name: /Open the viewer for series/ })
      .first()
      .click();
    await page.waitForURL(/\/imaging\/[0-9a-f-]{36}\/viewer/);
    await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 60_000 });
  });

  it('keeps the axial view with a caption, and says so', async () => {
    const axial = page.locator('[data-view="axial"]');
    await axial.focus();
    const button = page.locator('[data-keep-view]');
    await expect(button.textContent()).resolves.toContain('Axial');
    const line = axial.locator('line.crosshair').first();
    crosshair = {
      x1: Number(await line.getAttribute('x1')),
      y1: Number(await line.getAttribute('y1')),
      x2: Number(await line.getAttribute('x2')),
      y2: Number(await line.getAttribute('y2')),
    };
    const box = await axial.boundingBox();
    hostSize = { width: box?.width ?? 0, height: box?.height ?? 0 };
    await button.click();
    const dialog = page.getByRole('dialog');
    await dialog.getByRole('heading', { name: 'Keep this view' }).waitFor();
    await dialog.locator('[data-keep-preview]').waitFor();
    await dialog.getByLabel('Caption (optional)').fill(caption);
    await dialog.getByRole('button', { name: 'Keep', exact: true }).click();
    await page.getByText('Key image kept.', { exact: false }).waitFor({ timeout: 20_000 });
  });

  it('lists it in the Discussion section with a PNG of the slice and its crosshair', async () => {
    await page.goto(`${caseUrl}/discussion`);
    const entry = page.locator('[data-key-image]', { hasText: caption });
    await entry.waitFor({ timeout: 20_000 });
    await expect(entry.textContent()).resolves.toContain('Axial view');
    const source = await entry.locator('img').getAttribute('src');
    expect(source).toMatch(/^\/api\/key-images\/[0-9a-f-]{36}\/image\.png$/);
    const response = await page.request.get(`${baseUrl}${source}`);
    expect(response.status()).toBe(200);
    expect(response.headers()['content-type']).toBe('image/png');
    const bytes = await response.body();
    writeFileSync(join(artefacts, 'key-image.png'), bytes);
    const image = decodePng(new Uint8Array(bytes));
    // The drawing buffer's size: the pane's box in device pixels (device pixel ratio 1 here).
    expect(Math.abs(image.width - hostSize.width)).toBeLessThanOrEqual(1);
    expect(Math.abs(image.height - hostSize.height)).toBeLessThanOrEqual(1);

    const colours = new Set<number>();
    for (let at = 0; at < image.width * image.height * image.channels; at += image.channels) {
      colours.add((image.data[at] << 16) | (image.data[at + 1] << 8) | image.data[at + 2]);
    }
    expect(colours.size).toBeGreaterThan(64);

    // Along the crosshair line the overlay's dashes (6 on, 4 off) cover about 60 %; a third is
    // asked for, away from the ends. A parallel line 12 px beside it is the control: there the
    // tint must be rare, or the check would pass on any warm picture.
    const length = Math.hypot(crosshair.x2 - crosshair.x1, crosshair.y2 - crosshair.y1);
    const normal = {
      x: -(crosshair.y2 - crosshair.y1) / length,
      y: (crosshair.x2 - crosshair.x1) / length,
    };
    const share = (offsetPx: number) => {
      const samples = 200;
      let hits = 0;
      for (let index = 20; index < samples - 20; index++) {
        const t = index / samples;
        const x = crosshair.x1 + (crosshair.x2 - crosshair.x1) * t + normal.x * offsetPx;
        const y = crosshair.y1 + (crosshair.y2 - crosshair.y1) * t + normal.y * offsetPx;
        if (isCrosshairLike(image, x, y)) hits++;
      }
      return hits / (samples - 40);
    };
    expect(share(0)).toBeGreaterThan(1 / 3);
    expect(share(12)).toBeLessThan(share(0) / 3);
  });

  it('opens it at full size', async () => {
    const entry = page.locator('[data-key-image]', { hasText: caption });
    await entry.getByRole('button', { name: /Open the key image/ }).click();
    const dialog = page.getByRole('dialog');
    await dialog.locator('[data-key-image-large]').waitFor();
    await expect(
      dialog
        .locator('[data-key-image-large]')
        .evaluate((img) => (img as HTMLImageElement).naturalWidth),
    ).resolves.toBeGreaterThan(0);
    await dialog.getByRole('button', { name: 'Close' }).click();
    await dialog.waitFor({ state: 'detached' });
  });

  it('removes it after the confirmation', async () => {
    const entry = page.locator('[data-key-image]', { hasText: caption });
    await entry.locator('[data-remove-key-image]').click();
    const confirm = page.getByRole('dialog');
    await confirm.getByRole('heading', { name: 'Remove this key image?' }).waitFor();
    await confirm.getByRole('button', { name: 'Remove', exact: true }).click();
    await entry.waitFor({ state: 'detached', timeout: 20_000 });
  });
});
