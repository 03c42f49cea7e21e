/**
 * Benchmark: how long the case viewer takes to show its first frame, in Debian's headless
 * Chromium with software WebGL2 (SwiftShader, no GPU). Starts the app as the end-to-end tests do
 * (own database, migrated and seeded with the demo; the built client), signs in as the demo
 * presenter, opens the viewer of the demo case NLB-2026-014's CT several times with a fresh
 * page load, and prints:
 *   - first frame: from the page's navigation start to the viewer's mark
 *     `emberline:viewer-first-frame` (all three slice views drawn once, after the frame that
 *     drew them was presented);
 *   - from the viewer's creation (`emberline:viewer-opened`) to that mark;
 *   - the 3D surfaces (worker) and, after "Draft plan", the distance fields (worker).
 *
 *   npx ng build && node --import tsx test/e2e/viewer-first-frame.bench.ts [runs]
 *
 * Figures only; no threshold is checked (speed goals live here, not in tests).
 */
import type { TestProject } from 'vitest/node';
import { openBrowser } from './browser';
import setup from './e2e-setup';

const runs = Math.max(1, Number(process.argv[2] ?? 3) || 3);
const provided = new Map<string, string>();
const project = { provide: (key: string, value: string) => provided.set(key, value) };
const teardown = await setup(project as unknown as TestProject);
const browser = await openBrowser();

interface Marks {
  firstFrameMs: number | null;
  openedToFirstFrameMs: number | null;
  surfacesMs: number | null;
  clearanceMs: number | null;
}

/**
 * Marks of the viewer's page (performance entries), milliseconds from navigation start. Sent as
 * source text: tsx names inner functions with a helper that does not exist in the page.
 */
function readMarks(): Promise<Marks> {
  return browser.page.evaluate(`(() => {
    const mark = (name) => performance.getEntriesByName(name)[0]?.startTime ?? null;
    const opened = mark('emberline:viewer-opened');
    const firstFrame = mark('emberline:viewer-first-frame');
    const clearance = performance.getEntriesByName('emberline:clearance-fields')[0];
    return {
      firstFrameMs: firstFrame,
      openedToFirstFrameMs: opened !== null && firstFrame !== null ? firstFrame - opened : null,
      surfacesMs: mark('emberline:viewer-surfaces-ready'),
      clearanceMs: clearance ? clearance.duration : null,
    };
  })()`);
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

try {
  const baseUrl = provided.get('baseUrl') ?? '';
  const { page } = browser;
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail address', { exact: true }).fill('presenter@emberline.test');
  await page.getByLabel('Password', { exact: true }).fill('ember-demo-2026');
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.waitForURL(/\/cases/);
  await page.getByText('NLB-2026-014').first().click();
  await page.waitForURL(/\/cases\/[0-9a-f-]{36}/);
  const caseId = /\/cases\/([0-9a-f-]{36})/.exec(page.url())?.[1] ?? '';
  const seriesList = (await (
    await page.request.get(`${baseUrl}/api/cases/${caseId}/series`)
  ).json()) as {
    id: string;
    dimensions: number[];
  }[];
  const series = seriesList[0];
  if (!series) throw new Error('the demo case has no series');
  const viewerUrl = `${baseUrl}/cases/${caseId}/imaging/${series.id}/viewer`;
  console.log(
    `Series ${series.dimensions.join(' × ')} voxels, ${runs} fresh loads of ${viewerUrl}`,
  );

  const firstFrames: number[] = [];
  const fromOpened: number[] = [];
  for (let run = 1; run <= runs; run++) {
    await page.goto(viewerUrl);
    await page.locator('[data-first-frame="rendered"]').waitFor({ timeout: 60_000 });
    const marks = await readMarks();
    if (marks.firstFrameMs === null || marks.openedToFirstFrameMs === null) {
      throw new Error('the viewer set no first-frame mark');
    }
    firstFrames.push(marks.firstFrameMs);
    fromOpened.push(marks.openedToFirstFrameMs);
    console.log(
      `run ${run}: first frame ${marks.firstFrameMs.toFixed(0)} ms after navigation start, ` +
        `${marks.openedToFirstFrameMs.toFixed(0)} ms after the viewer was created`,
    );
  }
  console.log(
    `median: first frame ${median(firstFrames).toFixed(0)} ms from navigation start, ` +
      `${median(fromOpened).toFixed(0)} ms from the viewer's creation`,
  );

  await page.waitForFunction(
    () => performance.getEntriesByName('emberline:viewer-surfaces-ready').length > 0,
    undefined,
    { timeout: 120_000 },
  );
  const surfaces = await readMarks();
  console.log(`3D surfaces ready ${surfaces.surfacesMs?.toFixed(0)} ms after navigation start`);
  console.log(`  (${await page.locator('em-volume-view .caption .em-muted').innerText()})`);

  await page.getByRole('radio', { name: 'Draft plan' }).click();
  await page.waitForFunction(
    () => performance.getEntriesByName('emberline:clearance-fields').length > 0,
    undefined,
    { timeout: 120_000 },
  );
  const fields = await readMarks();
  console.log(`distance fields of every kind: ${fields.clearanceMs?.toFixed(0)} ms (worker)`);
  if (process.env.BENCH_SCREENSHOT) {
    await page.screenshot({ path: process.env.BENCH_SCREENSHOT, fullPage: true });
  }
} finally {
  await browser.close();
  await teardown();
}
