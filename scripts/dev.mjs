#!/usr/bin/env node
// `npm run dev`: serves the unbundled sources with @web/dev-server (live reload; slow first load) (config: web-dev-server.config.mjs) on port
// 8000, or the next free port (set PORT to choose another start). Does not open a browser.
import { createServer } from 'node:net';
import { fileURLToPath } from 'node:url';
import { startDevServer } from '@web/dev-server';
import devServerConfig from '../web-dev-server.config.mjs';

const root = fileURLToPath(new URL('..', import.meta.url));
process.chdir(root);

/** Resolves true if nothing listens on `port` (checked the way the dev server binds: all interfaces). */
/**
 * @param {number} port
 * @returns {Promise<boolean>}
 */
function isFree(port) {
  return new Promise((resolve) => {
    const probe = createServer();
    probe.once('error', () => resolve(false));
    probe.listen({ port }, () => probe.close(() => resolve(true)));
  });
}

/**
 * @param {number} start
 * @param {number} [attempts]
 */
async function firstFreePort(start, attempts = 100) {
  for (let port = start; port < start + attempts; port += 1) {
    if (await isFree(port)) return port;
  }
  throw new Error(`No free port between ${start} and ${start + attempts - 1}.`);
}

const requested = Number.parseInt(process.env.PORT ?? '', 10);
const port = await firstFreePort(Number.isInteger(requested) && requested > 0 ? requested : devServerConfig.port);

// The file config is passed in directly (not re-read) so the chosen port is not overridden.
const server = await startDevServer({
  config: { ...devServerConfig, port, open: false },
  readCliArgs: false,
  readFileConfig: false,
  logStartMessage: false,
});

console.log(`Tidemark (development server) is running at http://localhost:${port}/ — press Ctrl+C to stop`);

process.on('SIGTERM', () => {
  void server.stop().finally(() => process.exit(0));
});
