#!/usr/bin/env node
// `npm test`: every check of the project, in order, then one summary line.
// Format, lint and type checks count one each; the test runners report their own counts.
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join, relative } from 'node:path';
import {
  ensureChromium,
  ensureDependencies,
  ensureDicomTools,
  ensurePdfTools,
  root,
  run,
  say,
} from './setup.mjs';

const resultsDir = join(root, 'test-results');
rmSync(resultsDir, { recursive: true, force: true });
mkdirSync(resultsDir, { recursive: true });

ensureDependencies();
// The codec tests build their compressed reference files with dcmtk and opj_compress.
ensureDicomTools();
ensurePdfTools();
const { startPostgres, stopPostgres } = await import('./postgres.mjs');
// Leave the cluster as it was found: stop it afterwards only if this run started it.
const isPostgresStartedHere = startPostgres().isStartedHere;

const bin = (name) => join(root, 'node_modules', '.bin', name);
const results = [];
/** The failed tests' names and first message lines, repeated at the end where a log's tail shows them. */
const failures = [];

/** `file › test: first line of the message` for each failed test of a Jest-shaped JSON report. */
function failedTests(report) {
  const lines = [];
  for (const file of report.testResults ?? []) {
    const where = relative(root, file.name ?? '');
    for (const test of file.assertionResults ?? []) {
      if (test.status !== 'failed') continue;
      const message = String(test.failureMessages?.[0] ?? '')
        .split('\n')[0]
        .slice(0, 300);
      lines.push(`${where} › ${test.fullName ?? test.title}: ${message}`);
    }
    if (
      file.status === 'failed' &&
      !(file.assertionResults ?? []).some((t) => t.status === 'failed')
    )
      lines.push(
        `${where}: ${String(file.message ?? '')
          .split('\n')[0]
          .slice(0, 300)}`,
      );
  }
  return lines;
}

async function check(name, command, args) {
  say(`— ${name}`);
  const code = await run(command, args);
  results.push({ name, passed: code === 0 ? 1 : 0, failed: code === 0 ? 0 : 1 });
  return code === 0;
}

/** A vitest run reporting to JSON; counts its tests (a crash before any result counts as one failure). */
async function vitestRun(name, args, reportFile) {
  say(`— ${name}`);
  const code = await run(bin(args[0]), args.slice(1));
  let passed = 0;
  let failed = 0;
  if (existsSync(reportFile)) {
    const report = JSON.parse(readFileSync(reportFile, 'utf8'));
    failures.push(...failedTests(report));
    passed = report.numPassedTests ?? 0;
    failed =
      (report.numFailedTests ?? 0) +
      (report.numTotalTestSuites && report.success === false && report.numFailedTests === 0
        ? 1
        : 0);
  }
  if (code !== 0 && failed === 0) failed = 1;
  results.push({ name, passed, failed });
}

await check('format (prettier --check)', bin('prettier'), ['--check', '.', '--log-level', 'warn']);
await check('lint (eslint)', bin('eslint'), ['.', '--max-warnings', '0']);
await check('types: shared', bin('tsc'), ['-p', 'shared/tsconfig.json', '--noEmit']);
await check('types: server', bin('tsc'), ['-p', 'server/tsconfig.json', '--noEmit']);
await check('types: tests', bin('tsc'), ['-p', 'test/tsconfig.json', '--noEmit']);
await check('types: client', bin('tsc'), [
  '-p',
  'projects/emberline/tsconfig.app.json',
  '--noEmit',
]);

const serverReport = join(resultsDir, 'server.json');
await vitestRun(
  'unit and integration tests (shared, server, test/integration)',
  ['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${serverReport}`],
  serverReport,
);

const clientReport = join(resultsDir, 'client.json');
await vitestRun(
  'client unit tests (ng test)',
  ['ng', 'test', '--reporters=json', `--output-file=${clientReport}`],
  clientReport,
);

const isBuilt = await check('client build (ng build)', bin('ng'), ['build']);
if (isBuilt) {
  process.env.CHROMIUM_PATH = ensureChromium();
  const e2eReport = join(resultsDir, 'e2e.json');
  await vitestRun(
    'end-to-end tests (headless Chromium)',
    [
      'vitest',
      'run',
      '--config',
      'vitest.e2e.config.ts',
      '--reporter=default',
      '--reporter=json',
      `--outputFile.json=${e2eReport}`,
    ],
    e2eReport,
  );
} else {
  results.push({ name: 'end-to-end tests (not run: the build failed)', passed: 0, failed: 1 });
}

const passed = results.reduce((sum, r) => sum + r.passed, 0);
const failed = results.reduce((sum, r) => sum + r.failed, 0);
process.stdout.write('\nSummary\n');
for (const r of results) {
  process.stdout.write(
    `  ${r.failed ? 'FAIL' : 'ok  '}  ${r.name}: ${r.passed} passed, ${r.failed} failed\n`,
  );
}
if (failures.length) {
  process.stdout.write('\nFailed\n');
  for (const line of failures) process.stdout.write(`  ${line}\n`);
}
process.stdout.write(`\n${passed} passed, ${failed} failed\n`);
if (isPostgresStartedHere) stopPostgres();
process.exit(failed ? 1 : 0);
