import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { request, type APIRequestContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { assessmentStageLabels } from '@emberline/shared';
import { openBrowser, seriousAccessibilityViolations } from './browser';
import { decodePng } from './png-pixels';

const artefacts = fileURLToPath(new URL('../../test-results/e2e', import.meta.url));
mkdirSync(artefacts, { recursive: true });

const baseUrl = inject('baseUrl');
let browser: Awaited<ReturnType<typeof openBrowser>>;
let page: Page;
let admin: APIRequestContext;

// The seeded demo (server/seeders/demo-plans.ts): three invented plans on NLB-2026-014.
const demoPlans = [
  'Anterior subcostal, segment VIII',
  'Right lateral, segment VI, past the right hepatic vein',
  'Right intercostal, segment VIII',
];
const radiofrequency = 'Demo radiofrequency 17 G (invented)';
/** The plan on the radiofrequency profile: the one an edit of that profile concerns. */
const lateralPlan = demoPlans[1];
/** The submitted demo plan: the one copied as a new draft. */
const intercostalPlan = demoPlans[2];

/** Colours the picture draws with (plan-picture-drawing.ts, zone-styles.ts, tumour amber). */
const pictureColours = {
  tableZone: [0xd6, 0xf2, 0x5c],
  tumour: [0xf2, 0xa9, 0x00],
  needle: [0xff, 0x8a, 0x3d],
} as const;

beforeAll(async () => {
  browser = await openBrowser();
  page = browser.page;
  admin = await request.newContext({ baseURL: baseUrl });
});
afterAll(async () => {
  // Either may be missing when the set-up failed half way.
  await admin?.dispose();
  await browser?.close();
});

const card = (name: string) =>
  page.locator('section.plan').filter({ has: page.getByRole('heading', { name, exact: true }) });
const band = () => page.locator('em-comparison-summary-band');
const bandLine = (name: string) =>
  band()
    .locator('tr[data-summary-plan]')
    .filter({ has: page.getByText(name, { exact: true }) });

/** Pixels of a screenshot within 40 (sum over R, G, B) of a colour. */
function pixelsNear(png: Uint8Array, colour: readonly number[]): number {
  const image = decodePng(png);
  let count = 0;
  for (let index = 0; index < image.width * image.height; index++) {
    const at = index * image.channels;
    const difference =
      Math.abs(image.data[at] - colour[0]) +
      Math.abs(image.data[at + 1] - colour[1]) +
      Math.abs(image.data[at + 2] - colour[2]);
    if (difference <= 40) count++;
  }
  return count;
}

/** Waits until every demo plan's card shows a finished verdict (the seed queues them). */
async function waitForVerdicts(names: readonly string[], timeoutMs: number): Promise<void> {
  const started = Date.now();
  let readAt = started;
  for (;;) {
    const counts = await Promise.all(
      names.map((name) => card(name).locator('em-plan-assessment em-verdict-badge').count()),
    );
    if (counts.every((count) => count > 0)) return;
    if (Date.now() - started > timeoutMs) {
      throw new Error(`no verdict for every plan after ${timeoutMs / 1000} s`);
    }
    // A card may miss the end of a run on a loaded machine: the list is read afresh each 60 s.
    if (Date.now() - readAt > 60_000) {
      readAt = Date.now();
      await page.reload();
      await card(names[0]).waitFor({ timeout: 30_000 });
    }
    await page.waitForTimeout(1000);
  }
}

async function signInAsAdministrator(): Promise<string> {
  await admin.get('/api/health');
  const token = async () =>
    (await admin.storageState()).cookies.find((cookie) => cookie.name === 'XSRF-TOKEN')?.value ??
    '';
  const signIn = await admin.post('/api/auth/login', {
    headers: { 'x-xsrf-token': await token() },
    data: { email: 'admin@emberline.test', password: 'ember-demo-2026' },
  });
  expect(signIn.ok(), await signIn.text()).toBe(true);
  return token();
}

describe('the plan comparison, its summary band, copies and earlier inputs', () => {
  it(
    'signs in as the presenter and waits for the seeded assessments',
    { timeout: 420_000 },
    async () => {
      await page.goto(`${baseUrl}/sign-in`);
      await page.getByLabel('E-mail address', { exact: true }).fill('presenter@emberline.test');
      await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
      await page.getByRole('button', { name: 'Sign in', exact: true }).click();
      await page.waitForURL(/\/cases/);
      // The register may re-render its rows once its query settles: follow the link's address
      // rather than click a row that can be replaced under the pointer.
      const link = page.getByRole('link', { name: 'NLB-2026-014', exact: true });
      await link.waitFor({ timeout: 30_000 });
      await page.goto(`${baseUrl}${(await link.getAttribute('href')) ?? ''}`);
      await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
      await page.getByRole('tab', { name: 'Plans' }).click();
      await card(demoPlans[0]).waitFor({ timeout: 30_000 });
      await waitForVerdicts(demoPlans, 400_000);
    },
  );

  it('opens the comparison with a summary band: a line a plan, each with a drawn slice', async () => {
    await expect.poll(() => band().locator('tr[data-summary-plan]').count()).toBe(3);
    for (const name of demoPlans) {
      const line = bandLine(name);
      await line.locator('[data-picture-state="drawn"]').waitFor({ timeout: 30_000 });
      expect(await line.locator('[data-summary="verdict"] em-verdict-badge').count()).toBe(1);
      expect(await line.locator('[data-summary="clearance"]').innerText()).toMatch(
        /\d+\.\d mm[\s\S]*(Minimum|Nearest)/,
      );
      expect(await line.locator('[data-summary="margin"]').innerText()).toMatch(/mm/);
      expect(await line.locator('[data-summary="coverage"]').innerText()).toMatch(/%/);
      expect(await line.locator('[data-summary="zone-model"]').innerText()).toMatch(
        /Applicator zone table|Bioheat simulation/,
      );
      // The picture names its orientation and its scale.
      const caption = await line.locator('[data-picture-caption]').innerText();
      expect(caption).toMatch(
        /Through the needle, (axial|\d+° from axial) · \w+ to the right, \w+ down · bar \d+ mm/,
      );
    }
    const shot = await band().screenshot();
    writeFileSync(join(artefacts, 'plan-comparison-band.png'), shot);
    writeFileSync('/tmp/plan-comparison-band.png', shot);
  });

  it('draws the table zone outline, the tumour and the needle in the anterior plan’s picture', async () => {
    const canvas = bandLine(demoPlans[0]).locator('em-plan-slice-picture canvas');
    const shot = await canvas.screenshot();
    writeFileSync('/tmp/plan-comparison-picture.png', shot);
    // The seeded anterior plan centres its table zone on the segment VIII tumour: the outline,
    // the tumour's surface points and the needle all show.
    expect(pixelsNear(shot, pictureColours.tableZone)).toBeGreaterThan(40);
    expect(pixelsNear(shot, pictureColours.tumour)).toBeGreaterThan(20);
    expect(pixelsNear(shot, pictureColours.needle)).toBeGreaterThan(40);
    const label = (await canvas.getAttribute('aria-label')) ?? '';
    expect(label).toContain('table zone outlined');
    expect(label).toMatch(/scale bar is \d+ mm/);
  });

  it('shows each plan’s insertion rehearsal: tip errors, target motion, a plot, with the caution', async () => {
    const group = page.locator('tbody[data-group="rehearsal"]');
    await group.waitFor({ timeout: 30_000 });
    const assisted = group.locator('tr[data-row="rehearsal-assisted-0"]');
    // Every demo plan is rehearsed: the assisted column reads a figure in mm for each plan.
    await expect
      .poll(async () => (await assisted.innerText()).match(/\d+\.\d+ mm/g)?.length ?? 0)
      .toBe(3);
    expect(await group.locator('tr[data-row="rehearsal-freehand-0"]').innerText()).toMatch(/mm/);
    expect(await group.locator('tr[data-row="rehearsal-motion-0"]').innerText()).toMatch(/mm/);
    expect(await page.locator('[data-group-caution="rehearsal"]').innerText()).toMatch(
      /simulation/i,
    );
    const plots = group.locator('em-rehearsal-plot canvas');
    expect(await plots.count()).toBe(3);
    const label = (await plots.first().getAttribute('aria-label')) ?? '';
    expect(label).toMatch(/free-hand/i);
    expect(label).toMatch(/assisted/i);
    const shot = await group.screenshot();
    writeFileSync(join(artefacts, 'plan-comparison-rehearsal.png'), shot);
    writeFileSync('/tmp/plan-comparison-rehearsal.png', shot);
  });

  it('replays a rehearsal in 3D: the slider moves through time and depth, both modes', async () => {
    await page
      .locator('tbody[data-group="rehearsal"]')
      .locator('[data-testid="rehearsal-open-replay"]')
      .first()
      .click();
    const dialog = page.locator('[data-testid="rehearsal-replay-dialog"]');
    await dialog.waitFor({ timeout: 30_000 });
    try {
      await replayChecks(dialog);
    } finally {
      await page.keyboard.press('Escape');
      await dialog.waitFor({ state: 'detached', timeout: 10_000 });
    }
  });

  async function replayChecks(dialog: ReturnType<Page['locator']>): Promise<void> {
    const readout = dialog.locator('[data-testid="rehearsal-frame-readout"]');
    await readout.waitFor({ timeout: 30_000 });
    const first = await readout.innerText();
    expect(first).toMatch(/t = \d+\.\d+ s/);
    // The scene draws (software WebGL in headless Chromium) unless WebGL is missing, which the
    // dialog then says.
    expect(
      (await dialog.locator('[data-testid="rehearsal-scene"]').count()) +
        (await dialog.locator('[data-testid="rehearsal-no-webgl"]').count()),
    ).toBeGreaterThan(0);
    const slider = dialog.locator('[data-testid="rehearsal-slider"]');
    await slider.focus();
    await page.keyboard.press('End');
    await expect.poll(() => readout.innerText()).not.toBe(first);
    expect(await readout.innerText()).toMatch(/depth \d+(\.\d+)? mm/);
    const play = dialog.locator('[data-testid="rehearsal-play"]');
    await page.keyboard.press('Home');
    const atStart = await readout.innerText();
    await play.click();
    await expect.poll(() => readout.innerText(), { timeout: 10_000 }).not.toBe(atStart);
    // The robot-assisted replay of the same applicator: the toggle switches, the moment stays.
    const assisted = dialog.locator('[data-testid="rehearsal-mode"] [data-mode="assisted"]');
    await assisted.locator('button').click();
    await expect
      .poll(async () => (await assisted.getAttribute('class')) ?? '')
      .toContain('mat-button-toggle-checked');
    expect(await readout.innerText()).toMatch(/t = \d+\.\d+ s/);
    const shot = await page.locator('mat-dialog-container').screenshot();
    writeFileSync(join(artefacts, 'rehearsal-replay.png'), shot);
    writeFileSync('/tmp/rehearsal-replay.png', shot);
    expect(await dialog.innerText()).toMatch(/simulation/i);
  }

  it('folds a group of the table on screen and prints every group unfolded, without the page around it', async () => {
    const group = page.locator('tbody[data-group="heat-sinks"]');
    await group.getByRole('button', { name: /Heat sinks/ }).click();
    await expect.poll(() => group.locator('tr[data-row]').first().isVisible()).toBe(false);
    await page.emulateMedia({ media: 'print' });
    try {
      expect(await group.locator('tr[data-row]').first().isVisible()).toBe(true);
      expect(await page.locator('header.top-bar').isVisible()).toBe(false);
      expect(await page.locator('nav[mat-tab-nav-bar]').isVisible()).toBe(false);
      expect(await card(demoPlans[0]).isVisible()).toBe(false);
      expect(await band().isVisible()).toBe(true);
      expect(await page.locator('em-plan-comparison em-clinical-caution').isVisible()).toBe(true);
      expect(await page.getByRole('button', { name: 'Print the comparison' }).isVisible()).toBe(
        false,
      );
      const printed = await page.screenshot({ fullPage: true });
      writeFileSync(join(artefacts, 'plan-comparison-print.png'), printed);
      writeFileSync('/tmp/plan-comparison-print.png', printed);
    } finally {
      await page.emulateMedia({ media: 'screen' });
    }
    await group.getByRole('button', { name: /Heat sinks/ }).click();
    await expect.poll(() => group.locator('tr[data-row]').first().isVisible()).toBe(true);
  });

  it('copies a submitted plan as a new draft, shows it highlighted and opens it for drafting', async () => {
    const source = card(intercostalPlan);
    await source.getByRole('button', { name: 'Copy as new draft' }).click();
    const copyName = `${intercostalPlan} (revision 2)`;
    const copy = card(copyName);
    await copy.waitFor({ timeout: 10_000 });
    expect(await copy.getAttribute('data-new-draft')).toBe('true');
    expect(await copy.locator('.status').innerText()).toBe('Draft');
    await expect
      .poll(() => page.evaluate(() => document.activeElement?.textContent?.trim()))
      .toBe(copyName);
    await page.getByRole('status').filter({ hasText: 'was copied as the new draft' }).waitFor();
    // The copy is a draft: no copy button of its own, and the source keeps its state.
    expect(await copy.getByRole('button', { name: 'Copy as new draft' }).count()).toBe(0);
    expect(await source.locator('.status').innerText()).not.toBe('Draft');
    const shot = await copy.screenshot();
    writeFileSync(join(artefacts, 'plan-copy-highlighted.png'), shot);
    writeFileSync('/tmp/plan-copy-highlighted.png', shot);
    expect(await seriousAccessibilityViolations(page)).toEqual([]);

    await copy.getByRole('link', { name: 'Edit the new draft in the viewer' }).click();
    await page.waitForURL(/\/viewer\?plan=[0-9a-f-]{36}/);
    const nameField = page.getByLabel('Plan name', { exact: true });
    await nameField.waitFor({ timeout: 90_000 });
    expect(await nameField.inputValue()).toBe(copyName);
    expect(await nameField.isEditable()).toBe(true);
    await page.goBack();
    await card(copyName).waitFor({ timeout: 30_000 });
  });

  it(
    'says a plan was assessed on earlier inputs once an administrator edits its applicator profile, and assesses it again',
    { timeout: 420_000 },
    async () => {
      const token = await signInAsAdministrator();
      const profiles = (await (await admin.get('/api/admin/applicator-profiles')).json()) as {
        id: string;
        name: string;
        version: number;
      }[];
      const profile = profiles.find((candidate) => candidate.name === radiofrequency);
      if (!profile) throw new Error(`no profile ${radiofrequency}`);
      const edit = await admin.patch(`/api/admin/applicator-profiles/${profile.id}`, {
        headers: { 'x-xsrf-token': token },
        data: { zoneTableReference: 'Invented bench series for the demo, second reading.' },
      });
      expect(edit.ok(), await edit.text()).toBe(true);
      const edited = (await edit.json()) as { version: number };
      expect(edited.version).toBe(profile.version + 1);

      await page.reload();
      const lateral = card(lateralPlan);
      const notice = lateral.locator('[data-earlier-inputs]');
      await notice.waitFor({ timeout: 30_000 });
      expect(await notice.innerText()).toContain(
        `Applicator profile “${radiofrequency}” is at version ${edited.version} (assessed on version ${profile.version}).`,
      );
      await bandLine(lateralPlan).locator('[data-summary-earlier-inputs]').waitFor();
      expect(await bandLine(demoPlans[0]).locator('[data-summary-earlier-inputs]').count()).toBe(0);
      const changes = page.locator('tr[data-row="input-changes"]');
      expect(await changes.innerText()).toContain(`is at version ${edited.version}`);
      writeFileSync('/tmp/plan-earlier-inputs.png', await lateral.screenshot());

      await lateral.getByRole('button', { name: 'Assess again on today’s inputs' }).click();
      // The run's steps read in clinical words, never the engine's own names.
      const progress = lateral.locator('em-assessment-progress');
      await progress.waitFor({ timeout: 30_000 });
      // Read at once when it shows: the run may end (and the line go) a moment later.
      const stageOf = () =>
        lateral.evaluate(
          (element) => element.querySelector('em-assessment-progress .stage')?.textContent ?? '',
        );
      const started = Date.now();
      let stageWords = '';
      while (!stageWords && Date.now() - started < 20_000) {
        stageWords = (await stageOf()).replace(/^\s*·\s*/, '').trim();
        if (!stageWords) await page.waitForTimeout(100);
      }
      if (stageWords) expect(Object.values(assessmentStageLabels)).not.toContain(stageWords);
      await notice.waitFor({ state: 'detached', timeout: 30_000 });
      await waitForVerdicts([lateralPlan], 400_000);
      const applicators = page.locator('tr[data-row="applicator-profiles"]');
      await expect
        .poll(() => applicators.innerText(), { timeout: 30_000 })
        .toContain(`${radiofrequency}, version ${edited.version}`);
      expect(await bandLine(lateralPlan).locator('[data-summary-earlier-inputs]').count()).toBe(0);
    },
  );
});
