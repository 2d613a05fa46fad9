#!/usr/bin/env node
// Serves dist/ (the production build) on localhost with the app's Content-Security-Policy as an
// HTTP header. Any static web server can host dist/; this one is for `npm start` and the tests.
import { createServer } from 'node:http';
import { readFile, stat } from 'node:fs/promises';
import { extname, join, normalize } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CSP } from './build.mjs';

/** @type {Record<string, string>} */
const TYPES = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.json': 'application/json',
  '.webmanifest': 'application/manifest+json',
  '.txt': 'text/plain; charset=utf-8',
  '.png': 'image/png',
  '.svg': 'image/svg+xml',
};

/**
 * Starts a static server for `dir`; resolves with the server and its port.
 * @returns {Promise<{ server: import('node:http').Server; port: number }>}
 */
export function serveDist({ dir = fileURLToPath(new URL('../dist/', import.meta.url)), port = 0 } = {}) {
  /** @type {(req: import('node:http').IncomingMessage, res: import('node:http').ServerResponse) => Promise<void>} */
  const handle = async (req, res) => {
    try {
      const path = decodeURIComponent(new URL(req.url ?? '/', 'http://x').pathname);
      let file = normalize(join(dir, path));
      if (!file.startsWith(normalize(dir))) {
        res.writeHead(403).end();
        return;
      }
      if ((await stat(file).catch(() => null))?.isDirectory()) file = join(file, 'index.html');
      const body = await readFile(file);
      res.writeHead(200, {
        'Content-Type': TYPES[extname(file)] ?? 'application/octet-stream',
        'Content-Security-Policy': CSP,
        'X-Content-Type-Options': 'nosniff',
        'Referrer-Policy': 'no-referrer',
        'Cache-Control': 'no-cache',
      });
      res.end(body);
    } catch {
      res.writeHead(404, { 'Content-Type': 'text/plain' }).end('Not found');
    }
  };
  // `handle` answers every request itself, errors included.
  const server = createServer((req, res) => void handle(req, res));
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => {
      const address = server.address();
      // Listening on a TCP port, so the address is an AddressInfo (a string only for pipes).
      if (address === null || typeof address === 'string') reject(new Error('server has no TCP address'));
      else resolve({ server, port: address.port });
    });
  });
}
