import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

const require = createRequire(import.meta.url);

/** Debian's Chromium, headless, software rendering only (no GPU on this machine or in CI). */
export async function openBrowser(): Promise<{
  context: BrowserContext;
  page: Page;
  close(): Promise<void>;
}> {
  const userDataDir = mkdtempSync(join(tmpdir(), 'emberline-chromium-'));
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    viewport: { width: 1280, height: 860 },
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    context,
    page,
    async close() {
      await context.close();
      rmSync(userDataDir, { recursive: true, force: true });
    },
  };
}

interface AxeViolation {
  id: string;
  impact: 'minor' | 'moderate' | 'serious' | 'critical' | null;
  help: string;
  nodes: { target: string[] }[];
}

/** Runs axe-core (from the npm registry) inside the page; answers the serious and critical violations. */
export async function seriousAccessibilityViolations(page: Page): Promise<AxeViolation[]> {
  const source = readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');
  // Evaluated over the DevTools protocol: the app's CSP (script-src 'self') stays in force.
  await page.evaluate(source);
  const violations = await page.evaluate(async () => {
    const axe = (
      window as unknown as {
        axe: { run: (context: Document) => Promise<{ violations: AxeViolation[] }> };
      }
    ).axe;
    return (await axe.run(document)).violations;
  });
  return violations.filter(
    (violation) => violation.impact === 'serious' || violation.impact === 'critical',
  );
}
