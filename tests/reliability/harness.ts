// Node-side harness for the reliability tests that need a real browser around the real app:
// builds the production bundle (scripts/build.mjs) into a temporary folder, serves it with
// scripts/serve.mjs (which sends the app's Content-Security-Policy header), and starts the
// installed Chromium as a child process of this test with its own on-disk profile, driven through
// playwright-core over the DevTools protocol. Owning the process lets a test kill the whole
// browser (SIGKILL, no shutdown) and start it again on the same profile, the harshest crash a
// workstation sees short of a power cut. Never downloads a browser; nothing leaves 127.0.0.1.
import { spawn, type ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';

interface BuildModule {
  build(options: { quiet?: boolean; outDir?: string }): Promise<{ bytes: number; hash: string }>;
  CSP: string;
}
interface ServeModule {
  serveDist(options: { dir?: string; port?: number }): Promise<{ server: import('node:http').Server; port: number }>;
}
interface FindChromeModule {
  findChrome(): string | null;
}

const root = fileURLToPath(new URL('../../', import.meta.url));

// Loaded by URL so TypeScript does not need declarations for the plain-JS build scripts.
async function load<T>(path: string): Promise<T> {
  return (await import(/* @vite-ignore */ new URL(path, `file://${root}`).href)) as T;
}

export const CHROME_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-dev-shm-usage',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
  '--no-default-browser-check',
  '--disable-features=Translate,MediaRouter,OptimizationHints',
];

export interface ServedApp {
  /** http://127.0.0.1:PORT/ */
  url: string;
  origin: string;
  /** The CSP the build puts in its meta tag and the server sends as a header. */
  csp: string;
  dir: string;
  /** A temporary folder for the test's own files (downloads), outside the served folder. */
  scratch: string;
  /** Every request this server received (method and path), as the server saw them. */
  requests: string[];
  close(): Promise<void>;
}

/** Every file the production build reads from the repository, for the build cache key. */
function buildInputs(): string[] {
  const walk = (dir: string): string[] =>
    readdirSync(dir).flatMap((name) => {
      const path = join(dir, name);
      return statSync(path).isDirectory() ? walk(path) : [path];
    });
  return [
    ...walk(join(root, 'src')),
    join(root, 'index.html'),
    join(root, 'scripts/build.mjs'),
    join(root, 'scripts/zod-locales-en.js'),
    join(root, 'package-lock.json'),
  ]
    .filter((p) => existsSync(p))
    .sort();
}

/**
 * Builds the production app with scripts/build.mjs, once per source state: the test files of one
 * run share the build (a folder in the temporary directory named after a hash of the sources).
 */
async function cachedBuild(): Promise<string> {
  const hash = createHash('sha256');
  for (const path of buildInputs()) hash.update(path).update(readFileSync(path));
  const key = hash.digest('hex').slice(0, 16);
  const dir = join(tmpdir(), `tidemark-rel-build-${key}`);
  if (existsSync(join(dir, 'index.html'))) return dir;
  const builder = await load<BuildModule>('scripts/build.mjs');
  const fresh = mkdtempSync(join(tmpdir(), 'tidemark-rel-building-'));
  await builder.build({ quiet: true, outDir: fresh });
  try {
    renameSync(fresh, dir);
  } catch {
    // Another test file built the same sources at the same time: use its folder.
    rmSync(fresh, { recursive: true, force: true });
  }
  // Builds of earlier source states are no longer needed.
  for (const name of readdirSync(tmpdir())) {
    if (!name.startsWith('tidemark-rel-build-') || name.endsWith(key)) continue;
    const old = join(tmpdir(), name);
    if (Date.now() - statSync(old).mtimeMs > 3_600_000) rmSync(old, { recursive: true, force: true });
  }
  return dir;
}

/** Builds (or reuses the build of) the production app and serves it on 127.0.0.1. */
export async function buildAndServe(): Promise<ServedApp> {
  const { CSP } = await load<BuildModule>('scripts/build.mjs');
  const serve = await load<ServeModule>('scripts/serve.mjs');
  const dir = await cachedBuild();
  const scratch = mkdtempSync(join(tmpdir(), 'tidemark-rel-scratch-'));
  const { server, port } = await serve.serveDist({ dir: `${dir}/` });
  const origin = `http://127.0.0.1:${port}`;
  const requests: string[] = [];
  server.on('request', (req) => requests.push(`${req.method ?? ''} ${req.url ?? ''}`));
  return {
    url: `${origin}/`,
    origin,
    csp: CSP,
    dir,
    scratch,
    requests,
    close: () =>
      new Promise<void>((resolve) => {
        server.close(() => resolve());
        // Browsers keep idle keep-alive connections open; close() alone would wait for them.
        server.closeAllConnections();
        rmSync(scratch, { recursive: true, force: true });
      }),
  };
}

/**
 * Serves an already built app folder on another port: a new origin, so a test gets an empty
 * notebook (storage is per origin) without building again.
 */
export async function serveAgain(built: ServedApp): Promise<ServedApp> {
  const serve = await load<ServeModule>('scripts/serve.mjs');
  const { server, port } = await serve.serveDist({ dir: `${built.dir}/` });
  const origin = `http://127.0.0.1:${port}`;
  const requests: string[] = [];
  server.on('request', (req) => requests.push(`${req.method ?? ''} ${req.url ?? ''}`));
  return {
    url: `${origin}/`,
    origin,
    csp: built.csp,
    dir: built.dir,
    scratch: built.scratch,
    requests,
    close: () =>
      new Promise<void>((r) => {
        server.close(() => r());
        server.closeAllConnections();
      }),
  };
}

/** Browsers started here and still running: killed when the test process exits, whatever happened. */
const live = new Set<ChildProcess>();
process.on('exit', () => {
  for (const proc of live) if (proc.exitCode === null) proc.kill('SIGKILL');
});

/** A Chromium process with an on-disk profile, which the test may kill and start again. */
export class Chromium {
  private proc?: ChildProcess;
  private browser?: Browser;
  readonly profile: string;
  kills = 0;

  private constructor(profile: string) {
    this.profile = profile;
  }

  static async start(): Promise<Chromium> {
    const c = new Chromium(mkdtempSync(join(tmpdir(), 'tidemark-rel-profile-')));
    await c.launch();
    return c;
  }

  private async launch(): Promise<void> {
    const finder = await load<FindChromeModule>('scripts/find-chrome.mjs');
    const exe = finder.findChrome();
    if (!exe) throw new Error('No Chrome or Chromium found (set CHROME_PATH).');
    const proc = spawn(exe, [...CHROME_ARGS, '--headless', '--remote-debugging-port=0', `--user-data-dir=${this.profile}`, 'about:blank'], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    this.proc = proc;
    live.add(proc);
    proc.once('exit', () => live.delete(proc));
    const stderr = proc.stderr;
    const endpoint = await new Promise<string>((resolve, reject) => {
      let err = '';
      const timer = setTimeout(() => reject(new Error(`Chromium did not start: ${err.slice(-500)}`)), 60_000);
      stderr.on('data', (chunk: Buffer) => {
        err += chunk.toString();
        const m = /DevTools listening on (ws:\/\/\S+)/.exec(err);
        if (m) {
          clearTimeout(timer);
          resolve(m[1]!);
        }
      });
      proc.once('exit', (code) => {
        clearTimeout(timer);
        reject(new Error(`Chromium exited (${String(code)}) before it was ready: ${err.slice(-500)}`));
      });
    });
    // Keep reading stderr so the pipe never fills up and stalls the browser.
    stderr.on('data', () => undefined);
    this.browser = await chromium.connectOverCDP(endpoint, { timeout: 60_000 });
  }

  /** The profile's default context (shared by every tab, as in a real browser window). */
  context(): BrowserContext {
    const ctx = this.browser?.contexts()[0];
    if (!ctx) throw new Error('Chromium is not running');
    return ctx;
  }

  /** Kills the browser process without any shutdown (SIGKILL), then starts it on the same profile. */
  async killAndRestart(): Promise<void> {
    const proc = this.proc;
    if (proc && proc.exitCode === null) {
      const exited = new Promise<void>((r) => proc.once('exit', () => r()));
      proc.kill('SIGKILL');
      await exited;
    }
    this.kills += 1;
    this.browser = undefined;
    await this.launch();
  }

  async close(): Promise<void> {
    try {
      await this.browser?.close();
    } catch {
      // Already gone.
    }
    const proc = this.proc;
    if (proc && proc.exitCode === null) {
      const exited = new Promise<void>((r) => proc.once('exit', () => r()));
      proc.kill('SIGKILL');
      await exited;
    }
    // The browser's helper processes may still be writing for a moment after the main one exits.
    try {
      rmSync(this.profile, { recursive: true, force: true, maxRetries: 10, retryDelay: 200 });
    } catch {
      // A temporary folder left behind is harmless.
    }
  }
}

/** Waits until <tm-app> shows a worksheet in its grid (the app has opened the store and loaded). */
export async function waitForApp(page: Page, timeout = 60_000): Promise<void> {
  await page.waitForFunction(
    () => {
      const app = document.querySelector('tm-app');
      const grid = app?.shadowRoot?.querySelector('tm-grid') as (HTMLElement & { worksheet?: { rows: unknown[] } }) | null | undefined;
      return (grid?.worksheet?.rows.length ?? 0) > 0;
    },
    null,
    { timeout, polling: 50 },
  );
}

/**
 * Writes the figures of a run to .tmp/reliability-results/<name>.json; with RECORD_FIGURES=1 to
 * tests/reliability/results/<name>.json, the committed record the README quotes (so an ordinary
 * test run leaves the working tree clean).
 */
export function writeFigures(name: string, figures: Record<string, unknown>): void {
  const dir = join(root, process.env['RECORD_FIGURES'] === '1' ? 'tests/reliability/results' : '.tmp/reliability-results');
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, `${name}.json`), `${JSON.stringify({ ...figures, recordedBy: `tests/reliability/${name}.test.ts` }, null, 2)}\n`);
}

/** A small seeded generator (mulberry32), so a failing run can be replayed with its seed. */
export function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
