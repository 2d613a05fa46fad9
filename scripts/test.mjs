#!/usr/bin/env node
// `npm test`: Node tests (vitest, tests/**/*.test.ts), then browser tests (@web/test-runner in
// headless Chromium, tests/**/*_test.ts). Stops at the first runner that fails and exits with its
// code. The last line is always the total: "Tidemark tests: N passed, N failed".
//   --node-only      run only vitest
//   --browser-only   run only web-test-runner
// For a single file use the runners directly: `npx vitest run tests/<path>` or
// `npx web-test-runner --files tests/<path>_test.ts`.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { findChrome } from './find-chrome.mjs';

const root = fileURLToPath(new URL('..', import.meta.url));

/**
 * @param {string} message
 * @returns {never}
 */
function usage(message) {
  console.error(`${message}\nUsage: node scripts/test.mjs [--node-only | --browser-only]`);
  process.exit(2);
}

const args = process.argv.slice(2);
for (const arg of args) {
  if (arg !== '--node-only' && arg !== '--browser-only') usage(`Unknown argument: ${arg}`);
}
const nodeOnly = args.includes('--node-only');
const browserOnly = args.includes('--browser-only');
if (nodeOnly && browserOnly) usage('Use at most one of --node-only and --browser-only.');
const runNode = !browserOnly;
const runBrowser = !nodeOnly;

/**
 * JSON.parse, typed `unknown` so the caller states the shape it expects.
 * @param {string} text
 * @returns {unknown}
 */
const parseJson = (text) => JSON.parse(text);

/**
 * Absolute path of a (direct) dependency's command-line entry, run with this same Node.
 * @param {string} pkg
 * @param {string} name
 */
function binOf(pkg, name) {
  const packageDir = join(root, 'node_modules', pkg);
  const { bin } = /** @type {{ bin: string | Record<string, string> }} */ (
    parseJson(readFileSync(join(packageDir, 'package.json'), 'utf8'))
  );
  const entry = typeof bin === 'string' ? bin : bin[name];
  if (entry === undefined) throw new Error(`${pkg} has no "${name}" command`);
  return join(packageDir, entry);
}

/** @param {string} command */
function commandExists(command) {
  return spawnSync('sh', ['-c', `command -v ${command}`], { stdio: 'ignore' }).status === 0;
}

/** Returns a Chrome/Chromium path, installing Debian's chromium when running as root with apt. */
function ensureChrome() {
  const found = findChrome();
  if (found) return found;
  const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
  if (isRoot && commandExists('apt-get')) {
    console.log("No Chrome or Chromium found; installing Debian's chromium package (apt-get install -y chromium)...");
    const install = spawnSync('sh', ['-c', 'apt-get update && apt-get install -y chromium'], {
      stdio: 'inherit',
      env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
    });
    const installed = install.status === 0 ? findChrome() : null;
    if (installed) return installed;
    console.error('Installing chromium failed: install Chrome or Chromium yourself, or set CHROME_PATH.');
    process.exit(1);
  }
  console.error('No Chrome or Chromium found: install one (Debian/Ubuntu: sudo apt-get install chromium) or set CHROME_PATH.');
  process.exit(1);
}

/**
 * @param {string} path
 * @returns {unknown} the parsed file, or null when it is missing or not JSON
 */
function readJson(path) {
  try {
    return JSON.parse(readFileSync(path, 'utf8'));
  } catch {
    return null;
  }
}

/**
 * @param {string} command
 * @param {string[]} commandArgs
 * @param {NodeJS.ProcessEnv} [env]
 */
function run(command, commandArgs, env = process.env) {
  const result = spawnSync(process.execPath, [command, ...commandArgs], { cwd: root, stdio: 'inherit', env });
  if (result.error) throw result.error;
  // Killed by a signal (e.g. Ctrl+C): report it as a failure.
  return result.status ?? 1;
}

/**
 * The parts of vitest's JSON report read here.
 * @typedef {{
 *   numPassedTests: number; numFailedTests: number; numPendingTests: number; numTodoTests: number;
 *   testResults: { status: string; assertionResults: { status: string }[] }[];
 * }} VitestReport
 */
/**
 * What web-test-runner.config.mjs's counts reporter writes.
 * @typedef {{ passed: number; failed: number; skipped: number; fileErrors: number }} BrowserCounts
 */

const totals = { passed: 0, failed: 0, skipped: 0, errors: 0 };
/** @type {string[]} */
const notes = [];
let exitCode = 0;
const workDir = mkdtempSync(join(tmpdir(), 'tidemark-test-'));

try {
  // Check for the browser first, so a missing one is reported before minutes of Node tests.
  const chromePath = runBrowser ? ensureChrome() : null;

  if (runNode) {
    const report = join(workDir, 'vitest.json');
    const status = run(binOf('vitest', 'vitest'), ['run', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`]);
    const json = existsSync(report) ? /** @type {VitestReport | null} */ (readJson(report)) : null;
    if (json) {
      totals.passed += json.numPassedTests;
      totals.failed += json.numFailedTests;
      totals.skipped += json.numPendingTests + json.numTodoTests;
      // A file that failed to import, or failed in a hook, has no failed test of its own.
      totals.errors += json.testResults.filter(
        (file) => file.status === 'failed' && !file.assertionResults.some((t) => t.status === 'failed'),
      ).length;
    }
    if (status !== 0 && (!json || totals.failed + totals.errors === 0)) totals.errors += 1;
    if (status !== 0) {
      exitCode = status;
      if (runBrowser) notes.push('browser tests not run because Node tests failed');
    }
  }

  if (runBrowser && exitCode === 0) {
    const counts = join(workDir, 'wtr.json');
    const status = run(binOf('@web/test-runner', 'web-test-runner'), ['--config', 'web-test-runner.config.mjs'], {
      ...process.env,
      CHROME_PATH: chromePath ?? undefined,
      TIDEMARK_WTR_COUNTS: counts,
    });
    const before = totals.failed + totals.errors;
    const json = existsSync(counts) ? /** @type {BrowserCounts | null} */ (readJson(counts)) : null;
    if (json) {
      totals.passed += json.passed;
      totals.failed += json.failed;
      totals.skipped += json.skipped;
      totals.errors += json.fileErrors;
    }
    if (status !== 0 && totals.failed + totals.errors === before) totals.errors += 1;
    if (status !== 0) exitCode = status;
  }
} catch (error) {
  console.error(error);
  totals.errors += 1;
  exitCode = 1;
} finally {
  rmSync(workDir, { recursive: true, force: true });
}

let summary = `Tidemark tests: ${totals.passed} passed, ${totals.failed} failed`;
if (totals.skipped > 0) summary += `, ${totals.skipped} skipped`;
if (totals.errors > 0) summary += `, ${totals.errors} ${totals.errors === 1 ? 'error' : 'errors'} outside tests`;
if (notes.length > 0) summary += ` (${notes.join('; ')})`;
console.log(summary);
process.exit(exitCode);
