// Finds a local Chrome or Chromium for the browser tests.
// Order: $CHROME_PATH, then the usual Debian/Ubuntu/Google install paths.
// Used by scripts/test.mjs and web-test-runner.config.mjs; run directly it prints the path
// (exit 0) or nothing (exit 1), which .ci/run uses.
import { accessSync, constants, statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export const CHROME_CANDIDATES = [
  '/usr/bin/chromium',
  '/usr/bin/chromium-browser',
  '/usr/bin/google-chrome',
  '/usr/bin/google-chrome-stable',
];

/** @param {string} path */
function isExecutableFile(path) {
  try {
    accessSync(path, constants.X_OK);
    return statSync(path).isFile();
  } catch {
    return false;
  }
}

/** Returns the path of a usable Chrome/Chromium executable, or null if none is found. */
export function findChrome(env = process.env) {
  const fromEnv = env.CHROME_PATH?.trim();
  const candidates = fromEnv ? [fromEnv, ...CHROME_CANDIDATES] : CHROME_CANDIDATES;
  return candidates.find(isExecutableFile) ?? null;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const found = findChrome();
  if (found) console.log(found);
  process.exit(found ? 0 : 1);
}
