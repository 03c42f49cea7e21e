import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { structureKindLabels, type StructureKind } from '@emberline/shared';
import { writeAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { openBrowser, seriousAccessibilityViolations } from './browser';
import { decodePng, meanColour } from './png-pixels';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let sampleDirectory: string;
/** The generator's ground truth: the segment VIII tumour, LPS millimetres. */
let tumour: { centreLps: [number, number, number]; radiusMm: number };

const axialView = () => page.locator('[data-view="axial"]');

async function expectNoSeriousViolations(where: string): Promise<void> {
  const violations = await seriousAccessibilityViolations(page);
  const summary = violations.map(
    (v) =>
      `${v.id} (${v.impact}): ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
  );
  expect(summary, `axe-core on ${where}`).toEqual([]);
}

/** Presses a key `times` times on the focused element. */
async function press(key: string, times: number): Promise<void> {
  for (let count = 0; count < times; count++) await page.keyboard.press(key);
}

/** The LPS numbers of the crosshair read-out, "LPS (x, y, z) mm". */
async function crosshairLps(): Promise<number[]> {
  const text = await page.locator('[data-readout="crosshair"] dd').innerText();
  const match = /LPS \(([-\d.]+), ([-\d.]+), ([-\d.]+)\) mm/.exec(text.replace(/−/g, '-'));
  if (!match) throw new Error(`no LPS in "${text}"`);
  return match.slice(1, 4).map(Number);
}

/**
 * Where the crosshair shows on the axial view, page pixels: the crossing of the two dashed
 * lines the view draws (one horizontal, one vertical for an axial series).
 */
async function crosshairOnAxial(): Promise<{ x: number; y: number }> {
  const lines = await axialView()
    .locator('line.crosshair')
    .evaluateAll((elements) =>
      elements.map((line) =>
        ['x1', 'y1', 'x2', 'y2'].map((name) => Number(line.getAttribute(name))),
      ),
    );
  const vertical = lines.find(([x1, , x2]) => Math.abs(x1 - x2) < 0.5);
  const horizontal = lines.find(([, y1, , y2]) => Math.abs(y1 - y2) < 0.5);
  const box = await axialView().boundingBox();
  if (!vertical || !horizontal || !box) throw new Error('no crosshair on the axial view');
  return { x: box.x + vertical[0], y: box.y + horizontal[1] };
}

/** The text once it has stopped changing (figures arrive from the worker a moment later). */
async function settledText(locator: Locator): Promise<string> {
  let previous = await locator.innerText();
  for (let attempt = 0; attempt < 40; attempt++) {
    await page.waitForTimeout(250);
    const current = await locator.innerText();
    if (current === previous) return current;
    previous = current;
  }
  throw new Error('the text never settled');
}

async function figureMm(locator: Locator): Promise<number> {
  const text = await locator.innerText();
  const match = /([\d.]+) mm/.exec(text);
  if (!match) throw new Error(`no millimetres in "${text}"`);
  return Number(match[1]);
}

beforeAll(async () => {
  sampleDirectory = mkdtempSync(join(tmpdir(), 'emberline-e2e-ct-'));
  await writeAbdomenCt(sampleDirectory);
  const manifest = JSON.parse(readFileSync(join(sampleDirectory, 'manifest.json'), 'utf8')) as {
    tumours: { name: string; centreLps: [number, number, number]; radiusMm: number }[];
  };
  const segment8 = manifest.tumours.find((candidate) => candidate.name === 'tumour-segment-8');
  if (!segment8) throw new Error('the generator no longer makes the segment VIII tumour');
  tumour = segment8;
  browser = await openBrowser();
  page = browser.page;
});
afterAll(async () => {
  await browser.close();
  rmSync(sampleDirectory, { recursive: true, force: true });
});

describe('a presenting physician drafts a needle plan in the viewer', () => {
  let caseUrl = '';
  let targetPixel = { x: 0, y: 0 };
  let entryPixel = { x: 0, y: 0 };
  let draggedLength = '';

  it('signs in and opens a draft case', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByLabel('E-mail address', { exact: true }).fill('presenter@emberline.test');
    await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/cases/);
    await page.getByText('NLB-2026-019').first().click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    caseUrl = /^.*\/cases\/[0-9a-f-]{36}/.exec(page.url())?.[0] ?? '';
    await page.getByRole('tab', { name: 'Imaging' }).click();
    await page.getByRole('heading', { name: 'Image series' }).waitFor();
  });

  it('uploads the invented CT', async () => {
    const dicom = join(sampleDirectory, 'dicom');
    const files = readdirSync(dicom).map((name) => join(dicom, name));
    expect(files).toHaveLength(64);
    await page.locator('#series-files').setInputFiles(files);
    await page.getByRole('button', { name: 'Upload series' }).click();
    await page
      .getByRole('link', { name: /Open the viewer for series/ })
      .waitFor({ timeout: 60_000 });
  });

  it('imports its label map with the kinds of labels.json', { timeout: 180_000 }, async () => {
    const labels = JSON.parse(readFileSync(join(sampleDirectory, 'labels.json'), 'utf8')) as Record<
      string,
      StructureKind
    >;
    const form = page.locator('em-structure-import');
    await form.locator('input[type="file"]').setInputFiles(join(sampleDirectory, 'labels.nii.gz'));
    const entries = Object.entries(labels);
    for (const [index, [value, kind]] of entries.entries()) {
      if (index > 0) await form.getByRole('button', { name: 'Add a label' }).click();
      await form.locator(`input[id$="-label-${index}"]`).fill(value);
      await form.locator(`mat-select[id$="-kind-${index}"]`).click();
      await page.getByRole('option', { name: structureKindLabels[kind], exact: true }).click();
    }
    await form.getByRole('button', { name: 'Import label map' }).click();
    await form.getByText(`${entries.length} structures imported.`).waitFor({ timeout: 60_000 });
  });

  it('opens the viewer and draws the first frame', async () => {
    await page.getByRole('link', { name: /Open the viewer for series/ }).click();
    await page.waitForURL(/\/imaging\/[0-9a-f-]{36}\/viewer/);
    await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 60_000 });
    await expect(
      page.locator('canvas[aria-label="Axial slice of the series"]').count(),
    ).resolves.toBe(1);
    await expectNoSeriousViolations('the viewer');
  });

  it('steps the crosshair by keyboard to the slice through the tumour, at the DICOM slice position', async () => {
    // The grid (sample-data/README.md): voxel (i, j, k) centre at (−76.4 + 0.8 i, −63.6 + 0.8 j,
    // −90 + 2.5 k) mm, LPS; the crosshair starts at the centre voxel (96, 80, 32) =
    // (0.4, 0.4, −10). Thirteen slices up is k = 45, z = −90 + 2.5 × 45 = 22.5 mm.
    await axialView().focus();
    await press('PageUp', 13);
    // Arrows move 1 mm (10 with Shift) along the screen: left is the patient's right (−x),
    // up is anterior (−y).
    await press('Shift+ArrowLeft', 3);
    await press('ArrowLeft', 2);
    await press('Shift+ArrowUp', 1);
    await press('ArrowUp', 6);
    // The page redraws on its next frame: wait for the read-out to settle.
    await expect.poll(crosshairLps, { timeout: 10_000 }).toEqual([-31.6, -15.6, 22.5]);
    targetPixel = await crosshairOnAxial();
    // The entry 34 mm to the patient's right and 14 mm anterior of it, same slice.
    await press('Shift+ArrowLeft', 3);
    await press('ArrowLeft', 4);
    await press('Shift+ArrowUp', 1);
    await press('ArrowUp', 4);
    await expect.poll(crosshairLps, { timeout: 10_000 }).toEqual([-65.6, -29.6, 22.5]);
    entryPixel = await crosshairOnAxial();
  });

  it('measures the distance between two clicked points in millimetres', async () => {
    await page.getByRole('radio', { name: 'Measure distance' }).click();
    await page.mouse.click(targetPixel.x, targetPixel.y);
    await page.mouse.click(entryPixel.x, entryPixel.y);
    // √(34² + 14²) = 36.77 mm; each click lands within half a pixel (≈ 0.2 mm) of the point.
    const distance = await figureMm(page.locator('[data-readout="distance"] strong'));
    expect(Math.abs(distance - Math.hypot(34, 14))).toBeLessThan(0.5);
  });

  it('drafts a plan by clicking the target, then the entry', async () => {
    await page.getByRole('radio', { name: 'Draft plan' }).click();
    await page.getByText('Click the target', { exact: false }).waitFor();
    await page.mouse.click(targetPixel.x, targetPixel.y);
    await page.getByText('Now click the entry point', { exact: false }).waitFor();
    await page.mouse.click(entryPixel.x, entryPixel.y);
    await page.getByText('Drag the handles', { exact: false }).waitFor();
    const length = await figureMm(page.locator('[data-figure="length"]'));
    expect(Math.abs(length - Math.hypot(34, 14))).toBeLessThan(0.5);
  });

  it('shows the live clearance, the run inside the tumour matching the generator (ray to sphere)', async () => {
    const tumourRow = page.locator('tr[data-kind="tumour"] td');
    await expect
      .poll(async () => tumourRow.innerText(), { timeout: 60_000 })
      .toMatch(/crosses, [\d.]+ mm inside/);
    // Analytic: from the target t along the unit direction d to the entry, the sphere of centre
    // c and radius r is left at s = −o·d + √((o·d)² − |o|² + r²), o = t − c (manifest.json).
    const lps = await crosshairLps();
    const target = [lps[0] + 34, lps[1] + 14, lps[2]];
    const o = target.map((value, axis) => value - tumour.centreLps[axis]);
    const d = [-34 / Math.hypot(34, 14), -14 / Math.hypot(34, 14), 0];
    const od = o[0] * d[0] + o[1] * d[1] + o[2] * d[2];
    const oo = o[0] ** 2 + o[1] ** 2 + o[2] ** 2;
    const expected = -od + Math.sqrt(od * od - oo + tumour.radiusMm ** 2);
    const inside = Number(/crosses, ([\d.]+) mm/.exec(await tumourRow.innerText())?.[1]);
    // Voxelised sphere (0.8 × 0.8 × 2.5 mm voxels) and 0.5 mm sampling: within about a voxel.
    expect(Math.abs(inside - expected)).toBeLessThan(1.2);
    await expect
      .poll(async () => page.locator('tr[data-kind="portal-vein"] td').innerText(), {
        timeout: 60_000,
      })
      .toMatch(/mm/);
    expect(await page.getByText(/treating team decides/).count()).toBeGreaterThan(0);
  });

  it('draws the tumour overlay under the target handle (rendering matches the overlay maths)', async () => {
    const box = await axialView().boundingBox();
    if (!box) throw new Error('no axial view');
    const shot = decodePng(await axialView().screenshot());
    // 3 mm down-right of the target (the pane's scale from the two points 36.8 mm apart), away
    // from the crosshair lines and the path, still inside the 12 mm tumour: the amber tumour
    // colour over grey tissue.
    const pixelsPerMm =
      Math.hypot(entryPixel.x - targetPixel.x, entryPixel.y - targetPixel.y) / Math.hypot(34, 14);
    const offset = Math.max(4, Math.round(3 * pixelsPerMm));
    const [r, g, b] = meanColour(
      shot,
      targetPixel.x - box.x + offset,
      targetPixel.y - box.y + offset,
    );
    expect(r).toBeGreaterThan(g);
    expect(g - b).toBeGreaterThan(40);
  });

  it('moves the entry by dragging its handle', async () => {
    const before = await settledText(page.locator('[data-figure="length"]'));
    await page.mouse.move(entryPixel.x, entryPixel.y);
    await page.mouse.down();
    await page.mouse.move(entryPixel.x + 10, entryPixel.y + 4, { steps: 5 });
    await page.mouse.move(entryPixel.x + 20, entryPixel.y + 8, { steps: 5 });
    await page.mouse.up();
    draggedLength = await settledText(page.locator('[data-figure="length"]'));
    expect(draggedLength).not.toBe(before);
    expect(await figureMm(page.locator('[data-figure="length"]'))).toBeLessThan(Math.hypot(34, 14));
  });

  it('saves the plan, with a screenshot of the viewer', async () => {
    await page
      .getByLabel('Plan name', { exact: true })
      .fill('E2E lateral approach to segment VIII');
    await page.getByRole('button', { name: 'Save plan' }).click();
    await page.getByText(/^Saved at/).waitFor({ timeout: 20_000 });
    await page.waitForURL(/[?&]plan=[0-9a-f-]{36}/);
    await page
      .locator('em-volume-view .caption')
      .getByText(/surfaces in/)
      .waitFor({ timeout: 120_000 });
    const shot = await page.screenshot({ fullPage: true });
    writeFileSync(join(artefacts, 'viewer.png'), shot);
    // The 3D view shows surfaces: many of its pixels differ from the slate background.
    const volume = decodePng(await page.locator('em-volume-view .host').screenshot());
    let coloured = 0;
    for (let index = 0; index < volume.width * volume.height; index++) {
      const at = index * volume.channels;
      const distance =
        Math.abs(volume.data[at] - 13) +
        Math.abs(volume.data[at + 1] - 18) +
        Math.abs(volume.data[at + 2] - 23);
      if (distance > 30) coloured++;
    }
    expect(coloured / (volume.width * volume.height)).toBeGreaterThan(0.05);
  });

  it('shows the saved plan after a reload, and lists it in the Plans section', async () => {
    await page.reload();
    await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 60_000 });
    await page.getByRole('heading', { name: 'E2E lateral approach to segment VIII' }).waitFor();
    await expect
      .poll(async () => page.locator('[data-figure="length"]').innerText())
      .toBe(draggedLength);
    await page.goto(`${caseUrl}/plans`);
    const plan = page.locator('section.plan', { hasText: 'E2E lateral approach to segment VIII' });
    await plan.getByText('Draft', { exact: true }).waitFor();
    await expectNoSeriousViolations('the Plans section');
  });
});
