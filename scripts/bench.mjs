#!/usr/bin/env node
// `npm run bench`: Tidemark's performance figures, separate from the tests (what is measured and
// how: scripts/bench/run.ts). Bundles the TypeScript benchmark with esbuild into
// node_modules/.cache (so its imports resolve to this repository's packages), then runs it with
// this repository's build and static-server scripts. Options: --quick, --out FILE.
import { mkdir } from 'node:fs/promises';
import { fileURLToPath, pathToFileURL } from 'node:url';
import * as esbuild from 'esbuild';
import { build } from './build.mjs';
import { findChrome } from './find-chrome.mjs';
import { serveDist } from './serve.mjs';

const root = fileURLToPath(new URL('..', import.meta.url));
const cache = `${root}node_modules/.cache/tidemark-bench`;
await mkdir(cache, { recursive: true });
await esbuild.build({
  entryPoints: [`${root}scripts/bench/run.ts`],
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  // The app's own code is bundled (as in production); packages are imported from node_modules.
  packages: 'external',
  conditions: ['production'],
  define: { 'process.env.NODE_ENV': '"production"' },
  tsconfig: `${root}tsconfig.json`,
  outfile: `${cache}/run.mjs`,
  logLevel: 'warning',
});
/** @type {unknown} */
const loaded = await import(pathToFileURL(`${cache}/run.mjs`).href);
const bench = /** @type {{ runBench(tools: object): Promise<void> }} */ (loaded);
await bench.runBench({ root, args: process.argv.slice(2), build, serveDist, findChrome });
