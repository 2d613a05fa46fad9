// @web/test-runner config: browser tests `tests/**/*_test.ts` (mocha, describe/it) in headless
// Chromium. Modules load exactly as on the dev server (same plugins).
import { writeFileSync } from 'node:fs';
import { chromeLauncher } from '@web/test-runner-chrome';
import { defaultReporter } from '@web/test-runner';
import devServerConfig from './web-dev-server.config.mjs';
import { findChrome } from './scripts/find-chrome.mjs';

const executablePath = findChrome();
if (!executablePath) {
  throw new Error('No Chrome or Chromium found: install one (Debian/Ubuntu: sudo apt-get install chromium) or set CHROME_PATH.');
}

/**
 * Counts every test (and every file that failed before its tests ran) into a JSON file for scripts/test.mjs.
 * @param {string} outputFile
 * @returns {import('@web/test-runner').Reporter}
 */
function countsReporter(outputFile) {
  return {
    onTestRunFinished({ sessions }) {
      const counts = { passed: 0, failed: 0, skipped: 0, fileErrors: 0 };
      /** @param {import('@web/test-runner').TestSuiteResult} suite */
      const walk = (suite) => {
        for (const test of suite.tests) {
          if (test.skipped) counts.skipped += 1;
          else if (test.passed) counts.passed += 1;
          else counts.failed += 1;
        }
        for (const child of suite.suites) walk(child);
      };
      for (const session of sessions) {
        if (session.testResults) walk(session.testResults);
        // A file that failed to load, timed out or threw outside a test has no failed test of its own.
        const sessionFailedOutsideTests = !session.passed && (session.errors?.length ?? 0) > 0;
        if (sessionFailedOutsideTests) counts.fileErrors += 1;
      }
      writeFileSync(outputFile, JSON.stringify(counts));
    },
  };
}

const countsFile = process.env.TIDEMARK_WTR_COUNTS;

/** @type {import('@web/test-runner').TestRunnerConfig} */
export default {
  rootDir: devServerConfig.rootDir,
  files: 'tests/**/*_test.ts',
  nodeResolve: devServerConfig.nodeResolve,
  plugins: devServerConfig.plugins,
  testFramework: {
    config: { ui: 'bdd', timeout: 20000 },
  },
  // Some tests render ResizeObserver-driven elements (e.g. @lit-labs/virtualizer). Chromium then
  // reports "ResizeObserver loop completed with undelivered notifications" as a window error,
  // which is benign but would fail the test; drop only that message, before the runner sees it.
  testRunnerHtml: (testFramework) => `<!doctype html>
<html>
  <head>
    <script>
      window.addEventListener('error', (event) => {
        if (/^ResizeObserver loop/.test(event.message ?? '')) {
          event.stopImmediatePropagation();
          event.preventDefault();
        }
      }, true);
    </script>
  </head>
  <body>
    <script type="module" src="${testFramework}"></script>
  </body>
</html>`,
  browsers: [
    chromeLauncher({
      launchOptions: {
        executablePath,
        headless: true,
        args: [
          '--no-sandbox',
          '--disable-gpu',
          '--disable-dev-shm-usage',
          '--disable-background-networking',
          '--disable-component-update',
          '--disable-sync',
          '--no-first-run',
        ],
      },
    }),
  ],
  // One browser, one test file at a time: the machine has 2 shared cores, and mathjs alone is
  // several hundred unbundled modules on first load.
  concurrency: 1,
  concurrentBrowsers: 1,
  browserStartTimeout: 120_000,
  testsStartTimeout: 120_000,
  testsFinishTimeout: 600_000,
  reporters: countsFile ? [defaultReporter(), countsReporter(countsFile)] : [defaultReporter()],
};
