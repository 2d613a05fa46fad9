// @web/dev-server config for `npm start` (see scripts/start.mjs). The test runner reuses
// `plugins` and `nodeResolve` from here, so the app and its browser tests load modules the same way.
// No Content-Security-Policy here: in development the server's live-reload websocket needs to
// connect. The strict offline policy belongs to the production build.
import { fileURLToPath } from 'node:url';
import { esbuildPlugin } from '@web/dev-server-esbuild';
import { fromRollup } from '@web/dev-server-rollup';
import rollupCommonjs from '@rollup/plugin-commonjs';

const commonjs = fromRollup(rollupCommonjs);

/**
 * CommonJS packages that mathjs's ES module build imports. Browsers cannot load them as
 * modules, so they are converted on the fly. Without this the page fails with
 * "does not provide an export named 'default'". The others mathjs uses (decimal.js,
 * complex.js, fraction.js, typed-function, @babel/runtime helpers) ship ES modules.
 */
export const COMMONJS_PACKAGES = ['javascript-natural-sort', 'seedrandom', 'escape-latex', 'tiny-emitter'];

export const plugins = [
  commonjs({
    include: COMMONJS_PACKAGES.map((name) => `**/node_modules/${name}/**/*.js`),
    // seedrandom has an optional `require('crypto')` for Node; in the browser it uses window.crypto.
    ignore: ['crypto'],
  }),
  // Strips types only (no type checking: run `npm run typecheck`). tsconfig.json carries the
  // Lit decorator settings (experimentalDecorators, useDefineForClassFields: false).
  esbuildPlugin({ ts: true, target: 'es2022', tsconfig: fileURLToPath(new URL('tsconfig.json', import.meta.url)) }),
];

export default {
  rootDir: fileURLToPath(new URL('.', import.meta.url)),
  port: 8000,
  open: false,
  // Serve index.html for `/` and for client-side routes.
  appIndex: 'index.html',
  nodeResolve: true,
  // Reload the page when a served file changes.
  watch: true,
  plugins,
};
