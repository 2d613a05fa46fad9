#!/usr/bin/env node
// `npm run build`: the production build in dist/ — one minified bundle, index.html with a strict
// Content-Security-Policy, a web app manifest and a service worker that keeps the app working
// offline after the first visit. Host dist/ on any static web server (see README).
import { createHash } from 'node:crypto';
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { gzipSync } from 'node:zlib';
import { fileURLToPath, pathToFileURL } from 'node:url';
import * as esbuild from 'esbuild';

const root = fileURLToPath(new URL('..', import.meta.url));
const dist = `${root}dist`;

/**
 * The page may load only its own scripts, styles and images and may connect nowhere: no data can
 * leave the page even if script were injected. Lit's templates go through its Trusted Types
 * policy `lit-html`; raw innerHTML is refused.
 */
export const CSP = [
  "default-src 'none'",
  "script-src 'self'",
  "style-src 'self'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "worker-src 'self'",
  "manifest-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "require-trusted-types-for 'script'",
  // lit-html stamps templates; tidemark-sw only lets the page register its own ./sw.js.
  'trusted-types lit-html tidemark-sw',
].join('; ');

/**
 * zod re-exports every message locale through a namespace object (`z.locales`), which defeats
 * tree-shaking: 64 translations we never use. The app speaks English only, so the bundle gets a
 * locales module that holds English alone. Nothing else of zod changes.
 */
/** @type {import('esbuild').Plugin} */
const englishOnlyZodLocales = {
  name: 'zod-english-only',
  setup(b) {
    b.onResolve({ filter: /^\.\.\/locales\/index\.js$/ }, (args) =>
      /[\\/]zod[\\/]v4[\\/]/.test(args.importer) ? { path: fileURLToPath(new URL('./zod-locales-en.js', import.meta.url)) } : undefined,
    );
  },
};

/** Builds into `outDir` (default dist/; tests build into a temporary folder of their own). */
export async function build({ quiet = false, outDir = dist } = {}) {
  const started = performance.now();
  await rm(outDir, { recursive: true, force: true });
  await mkdir(`${outDir}/assets`, { recursive: true });
  const result = await esbuild.build({
    entryPoints: [`${root}src/app/main.ts`],
    bundle: true,
    format: 'esm',
    minify: true,
    target: 'es2022',
    conditions: ['production'],
    tsconfig: `${root}tsconfig.json`,
    outfile: `${outDir}/assets/app.js`,
    legalComments: 'external',
    metafile: true,
    logLevel: 'warning',
    define: { 'process.env.NODE_ENV': '"production"' },
    plugins: [englishOnlyZodLocales],
  });
  const js = await readFile(`${outDir}/assets/app.js`);
  const hash = createHash('sha256').update(js).digest('hex').slice(0, 12);

  const html = (await readFile(`${root}index.html`, 'utf8'))
    .replace('<script type="module" src="/src/app/main.ts"></script>', '<script type="module" src="./assets/app.js"></script>')
    .replace(
      '<meta charset="utf-8" />',
      `<meta charset="utf-8" />\n    <meta http-equiv="Content-Security-Policy" content="${CSP}" />\n    <link rel="manifest" href="./manifest.webmanifest" />`,
    );
  await writeFile(`${outDir}/index.html`, html);
  await writeFile(
    `${outDir}/manifest.webmanifest`,
    JSON.stringify(
      {
        name: 'Tidemark',
        short_name: 'Tidemark',
        start_url: './',
        display: 'standalone',
        background_color: '#f6f4ef',
        theme_color: '#1c2430',
      },
      null,
      2,
    ),
  );
  const shell = ['./', './index.html', './assets/app.js', './manifest.webmanifest'];
  // Replace the quoted placeholders (the file's header comment names them too).
  const sw = (await readFile(`${root}src/app/sw.js`, 'utf8'))
    .replace("'__CACHE__'", JSON.stringify(`tidemark-${hash}`))
    .replace("'__SHELL__'", JSON.stringify(shell));
  await writeFile(`${outDir}/sw.js`, sw);

  const gz = gzipSync(js, { level: 9 }).length;
  const stats = { bytes: js.length, gzipBytes: gz, hash, ms: Math.round(performance.now() - started), metafile: result.metafile };
  if (!quiet)
    console.log(`Built dist/ in ${stats.ms} ms: assets/app.js ${(js.length / 1024).toFixed(0)} KB, ${(gz / 1024).toFixed(0)} KB gzipped.`);
  return stats;
}

// Run directly (not imported): build. pathToFileURL escapes spaces and other characters in the path.
const invokedAs = process.argv[1];
if (invokedAs !== undefined && import.meta.url === pathToFileURL(invokedAs).href) await build();
