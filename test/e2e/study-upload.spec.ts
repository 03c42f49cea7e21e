/**
 * A presenter sends a whole study as a folder, the way export media hold it (extensionless
 * files, a README beside them), and chooses the portal-venous phase: the chooser lists both
 * phases with their hints and sets the localizer, the dose report and the README aside; only
 * the kept phase is stored. All of the study is invented (`imaging-fixtures.ts`).
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import {
  buildSeries,
  originalUid,
  part10,
  seriesSpec,
  type JsonDataset,
} from '../integration/imaging-fixtures';
import { openBrowser, seriousAccessibilityViolations } from './browser';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });
const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let studyFolder: string;

/** The invented study on disk: EXPORT/DICOM/IM0001…, a README.TXT beside. */
function writeStudy(root: string): string {
  const folder = join(root, 'EXPORT');
  mkdirSync(join(folder, 'DICOM'), { recursive: true });
  const studyUid = originalUid();
  const frameOfReferenceUid = originalUid();
  const phase = (number: string, description: string) => (_s: number, dataset: JsonDataset) => {
    dataset['0008103E'] = { vr: 'LO', Value: [description] };
    dataset['00200011'] = { vr: 'IS', Value: [number] };
    dataset['00180050'] = { vr: 'DS', Value: ['2.5'] };
    dataset['00180010'] = { vr: 'LO', Value: ['IOHEXOL'] };
  };
  const files = [
    ...buildSeries(
      seriesSpec({
        studyUid,
        frameOfReferenceUid,
        seriesUid: originalUid(),
        slices: 1,
        adjust: (_s, dataset) => {
          dataset['00080008'] = { vr: 'CS', Value: ['ORIGINAL', 'PRIMARY', 'LOCALIZER'] };
          dataset['00200011'] = { vr: 'IS', Value: ['1'] };
        },
      }),
    ),
    ...buildSeries(
      seriesSpec({
        studyUid,
        frameOfReferenceUid,
        seriesUid: originalUid(),
        slices: 8,
        adjust: phase('4', 'Abdomen arterial 2.5mm'),
      }),
    ),
    ...buildSeries(
      seriesSpec({
        studyUid,
        frameOfReferenceUid,
        seriesUid: originalUid(),
        slices: 10,
        adjust: phase('5', 'Abdomen portal venous 2.5mm'),
      }),
    ),
    part10({
      '00080016': { vr: 'UI', Value: ['1.2.840.10008.5.1.4.1.1.88.67'] },
      '00080018': { vr: 'UI', Value: [originalUid()] },
      '00080060': { vr: 'CS', Value: ['SR'] },
      '0020000D': { vr: 'UI', Value: [studyUid] },
      '0020000E': { vr: 'UI', Value: [originalUid()] },
      '00200011': { vr: 'IS', Value: ['997'] },
    }),
  ];
  files.forEach((file, index) =>
    writeFileSync(join(folder, 'DICOM', `IM${String(index + 1).padStart(4, '0')}`), file),
  );
  writeFileSync(join(folder, 'README.TXT'), 'An invented study for the Emberline tests.\n');
  return folder;
}

beforeAll(async () => {
  studyFolder = writeStudy(mkdtempSync(join(tmpdir(), 'emberline-e2e-study-')));
  browser = await openBrowser();
  page = browser.page;
});

afterAll(async () => {
  await browser.close();
  rmSync(join(studyFolder, '..'), { recursive: true, force: true });
});

describe('a presenter uploads a whole study and keeps one phase', () => {
  it('signs in and opens the imaging of a case', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await page.getByLabel('E-mail address', { exact: true }).fill('presenter@emberline.test');
    await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/cases/);
    await page.getByText('NLB-2026-027').first().click();
    await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
    await page.getByRole('tab', { name: 'Imaging' }).click();
    await page.getByRole('heading', { name: 'Image series' }).waitFor();
  });

  it('chooses the folder and sees the two phases, the portal-venous one chosen', async () => {
    await page.locator('#series-folder').setInputFiles(studyFolder);
    await expect
      .poll(() => page.locator('#series-files-summary').innerText())
      .toMatch(/^21 files in 2 folders chosen/);
    await page.getByRole('button', { name: 'Upload series' }).click();
    const chooser = page.getByRole('group', {
      name: 'This upload holds 2 series: choose what the board sees',
    });
    await chooser.waitFor({ timeout: 60_000 });
    const arterial = page.getByRole('checkbox', { name: 'Abdomen arterial 2.5mm' });
    const venous = page.getByRole('checkbox', { name: 'Abdomen portal venous 2.5mm' });
    expect(await arterial.isChecked()).toBe(false);
    expect(await venous.isChecked()).toBe(true);
    const text = await page.locator('em-series-chooser').innerText();
    expect(text).toContain('Phase: arterial');
    expect(text).toContain('Phase: portal venous');
    expect(text).toMatch(/Localizer \(series 1\)/);
    expect(text).toMatch(/Dose report \(series 997\)/);
    expect(text).toContain('README.TXT');
    const violations = await seriousAccessibilityViolations(page);
    expect(violations.map((violation) => violation.id)).toEqual([]);
    await page.screenshot({ path: join(artefacts, 'study-chooser.png'), fullPage: true });
  });

  it('keeps the portal-venous phase; the case lists it alone', async () => {
    await page.getByRole('button', { name: 'Keep 1 series' }).click();
    await page.getByText(/Stored: .*10 slices/).waitFor({ timeout: 60_000 });
    await expect
      .poll(() => page.getByRole('link', { name: /Open the viewer for series/ }).count())
      .toBe(1);
    await page.screenshot({ path: join(artefacts, 'study-kept.png'), fullPage: true });
  });
});
