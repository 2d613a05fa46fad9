#!/usr/bin/env node
// `npm run check`: the code health gates, one after another, fastest first. Every gate runs even
// when an earlier one fails, so one run reports everything; the exit code is non-zero if any
// failed. CI runs this before the tests (.ci/run). DEVELOPERS.md, "Code health gates", says what
// each gate is for.
//   node scripts/check.mjs [gate...]   run only the named gates (format, knip, types, lint)
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));

/**
 * JSON.parse, typed `unknown` so the caller states the shape it expects.
 * @param {string} text
 * @returns {unknown}
 */
const parseJson = (text) => JSON.parse(text);

/**
 * Absolute path of a dependency's command-line entry, run with this same Node.
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

/** @typedef {{ name: string; what: string; steps: [string, string, string[]][] }} Gate */

/** @type {Gate[]} */
const GATES = [
  { name: 'format', what: 'prettier --check', steps: [['prettier', 'prettier', ['--check', '--log-level', 'warn', '.']]] },
  { name: 'knip', what: 'unused files, exports, dependencies', steps: [['knip', 'knip', ['--no-progress']]] },
  {
    name: 'types',
    what: 'tsc --noEmit (app, tests, scripts; service worker)',
    steps: [
      ['typescript', 'tsc', ['--noEmit', '-p', 'tsconfig.json']],
      ['typescript', 'tsc', ['--noEmit', '-p', 'tsconfig.sw.json']],
    ],
  },
  { name: 'lint', what: 'eslint (type-aware, lit, wc)', steps: [['eslint', 'eslint', ['--max-warnings', '0', '.']]] },
];

const wanted = process.argv.slice(2);
for (const name of wanted) {
  if (!GATES.some((g) => g.name === name)) {
    console.error(`Unknown gate "${name}"; the gates are ${GATES.map((g) => g.name).join(', ')}.`);
    process.exit(2);
  }
}

/** @type {{ name: string; ok: boolean; seconds: number }[]} */
const results = [];
for (const gate of GATES.filter((g) => wanted.length === 0 || wanted.includes(g.name))) {
  console.log(`\n== ${gate.name}: ${gate.what}`);
  const started = performance.now();
  let ok = true;
  for (const [pkg, command, args] of gate.steps) {
    const run = spawnSync(process.execPath, [binOf(pkg, command), ...args], { cwd: root, stdio: 'inherit' });
    if (run.error) throw run.error;
    if (run.status !== 0) ok = false;
  }
  const seconds = (performance.now() - started) / 1000;
  results.push({ name: gate.name, ok, seconds });
  console.log(`== ${gate.name}: ${ok ? 'passed' : 'FAILED'} (${seconds.toFixed(1)} s)`);
}

const failed = results.filter((r) => !r.ok);
const total = results.reduce((sum, r) => sum + r.seconds, 0);
const timings = `${results.map((r) => `${r.name} ${r.seconds.toFixed(0)} s`).join(', ')}; ${total.toFixed(0)} s in all`;
console.log(
  failed.length === 0
    ? `\nTidemark checks: all ${results.length} gates passed (${timings})`
    : `\nTidemark checks: FAILED ${failed.map((r) => r.name).join(', ')} (${timings})`,
);
process.exit(failed.length > 0 ? 1 : 0);
