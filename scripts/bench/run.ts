/**
 * `npm run bench` (launched by scripts/bench.mjs, which bundles this file): Tidemark's
 * performance figures, separate from the tests. Needs a Chrome or Chromium (no browser is
 * downloaded) and nothing else after `npm install`.
 *
 * What it measures (printed as a table and written to bench-results/bench-<time>.json and
 * bench-results/latest.json):
 * 1. JavaScript shipped: the production build's app.js and sw.js, gzipped (level 9).
 * 2. Core, in Node: the recompute after one cell edit as the app does it (only the rows the edit
 *    reaches, then the goal engine) against a naive full re-evaluation of every derived measure,
 *    score and goal, side by side in the same run, at 50, 500 and 5,000 rows (./core.ts).
 * 3. Edit to paint, in headless Chromium on the production build: from the Enter key press that
 *    commits a typed value to the first frame painted after the app has put it in its view,
 *    recomputed derived values and goal statuses and re-rendered (requestAnimationFrame, then a
 *    message posted from it, which runs once that frame is painted). Cells edited are spread over
 *    the whole worksheet (./plan.ts). Half the edits with the trends panel under the grid open,
 *    half with it closed; the targets are judged on the screen as the app opens the worksheet
 *    (trends open up to 300 rows, closed above).
 * 4. IndexedDB commit latency: `store.commit` of one-cell edits (validation, one readwrite
 *    transaction, `tx.done`) at each size, in the browser (./page.ts).
 * 5. Cold load: a new browser process on a profile whose notebook holds 200 worksheets of 100
 *    rows, after a first visit installed the service worker; from navigation start to the first
 *    frame painted with the opened worksheet's rows, its active cell and its goal statuses.
 *
 * Options: --quick (fewer samples, for a smoke run), --out FILE (JSON path).
 */
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { cpus, loadavg, release, tmpdir, totalmem, type as osType } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import * as esbuild from 'esbuild';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { coreBench, editPlan, type CoreSizeResult } from './core.js';
import type { PlannedEdit } from './plan.js';

/** What the launcher passes in (plain-JS build scripts, loaded by the launcher from the repository). */
export interface BenchTools {
  root: string;
  args: readonly string[];
  build(options: { quiet?: boolean; outDir?: string }): Promise<{ bytes: number; gzipBytes: number }>;
  serveDist(options: { dir?: string; port?: number }): Promise<{ server: { close(): unknown }; port: number }>;
  findChrome(): string | null;
}

interface Stats {
  n: number;
  p50: number;
  p95: number;
  max: number;
  samples: number[];
}

interface ColdLoadProbe {
  painted: number;
  seen: number;
  responseEnd: number | null;
  rows: number;
  label: string;
  controlled: boolean;
}

/** What the bench's probes and helper page put on `window`. */
interface BenchWindow {
  __tmSamples: number[];
  __tmArm: boolean;
  __tmCold?: ColdLoadProbe;
  tidemarkBench: {
    seed(o: { worksheets: number; rows: number }): Promise<{ ids: string[]; ms: number }>;
    commitLatency(o: { rows: number; commits: number }): Promise<number[]>;
  };
}

/** The parts of the app's elements the driver reads. */
type AppRoot = Element & { shadowRoot: ShadowRoot };
type GridEl = HTMLElement & {
  updateComplete: Promise<unknown>;
  worksheet: { rows: { cells: Record<string, { value: unknown } | undefined> }[] };
};

const SIZES = [50, 500, 5000] as const;
const CHROME_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-dev-shm-usage',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
];

/** Targets of issue 7. */
const TARGETS = {
  editP95At500: 16,
  editP95At5000: 50,
  coreSpeedupAt5000: 10,
  commitP95: 20,
  coldLoadMs: 1000,
  gzipKb: 250,
};

const say = (line: string): void => {
  process.stdout.write(`${line}\n`);
};

/** Nearest-rank percentile of a list of numbers. */
export function percentile(values: readonly number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))]!;
}

function stats(values: readonly number[]): Stats {
  return {
    n: values.length,
    p50: percentile(values, 50),
    p95: percentile(values, 95),
    max: values.length > 0 ? Math.max(...values) : Number.NaN,
    samples: values.map((v) => Math.round(v * 100) / 100),
  };
}

const ms = (v: number): string => (Number.isFinite(v) ? (v >= 100 ? v.toFixed(0) : v.toFixed(1)) : '—');

async function bundle(root: string, entry: string, outfile: string): Promise<void> {
  await esbuild.build({
    entryPoints: [join(root, entry)],
    bundle: true,
    format: 'esm',
    platform: 'browser',
    target: 'es2022',
    minify: true,
    conditions: ['production'],
    define: { 'process.env.NODE_ENV': '"production"' },
    tsconfig: join(root, 'tsconfig.json'),
    outfile,
    logLevel: 'warning',
  });
}

function machine(browserVersion: string) {
  const cpu = cpus();
  return {
    cores: cpu.length,
    cpu: cpu[0]?.model ?? 'unknown',
    memoryGb: Math.round(totalmem() / 2 ** 30),
    os: `${osType()} ${release()}`,
    node: process.version,
    chromium: browserVersion,
    loadAverageAtStart: loadavg().map((v) => Math.round(v * 100) / 100),
    loadAverageAtEnd: [] as number[],
  };
}

// --- Browser parts --------------------------------------------------------------------------

/** Injected before the app's scripts: times Enter (armed by the driver) to the next painted frame. */
const EDIT_PROBE = `
  window.__tmSamples = [];
  window.__tmArm = false;
  addEventListener('keydown', (e) => {
    if (e.key !== 'Enter' || !window.__tmArm) return;
    window.__tmArm = false;
    const t0 = e.timeStamp;
    requestAnimationFrame(() => {
      const ch = new MessageChannel();
      ch.port1.onmessage = () => window.__tmSamples.push(performance.now() - t0);
      ch.port2.postMessage(null);
    });
  }, true);
`;

/** Injected before the app's scripts: the first painted frame with rows, the active cell and goals. */
const COLD_PROBE = `
  (() => {
    const poll = () => {
      const app = document.querySelector('tm-app');
      const grid = app && app.shadowRoot && app.shadowRoot.querySelector('tm-grid');
      const g = grid && grid.shadowRoot;
      const stop = g && g.querySelector('tbody tr[role="row"] [tabindex="0"]');
      const panel = app && app.shadowRoot.querySelector('tm-goal-panel');
      const goal = panel && panel.shadowRoot && panel.shadowRoot.querySelector('button.goal');
      if (stop && goal) {
        const seen = performance.now();
        const ch = new MessageChannel();
        ch.port1.onmessage = () => {
          const nav = performance.getEntriesByType('navigation')[0];
          window.__tmCold = {
            painted: performance.now(),
            seen,
            responseEnd: nav ? nav.responseEnd : null,
            rows: g.querySelectorAll('tbody tr[role="row"]').length,
            label: (app.shadowRoot.querySelector('h1') || {}).textContent || '',
            controlled: Boolean(navigator.serviceWorker && navigator.serviceWorker.controller),
          };
        };
        ch.port2.postMessage(null);
        return;
      }
      requestAnimationFrame(poll);
    };
    requestAnimationFrame(poll);
  })();
`;

function appReady(): boolean {
  const app = document.querySelector('tm-app');
  const g = app?.shadowRoot?.querySelector('tm-grid')?.shadowRoot;
  return Boolean(g?.querySelector('tbody tr[role="row"]'));
}

async function launch(executablePath: string, userDir: string): Promise<BrowserContext> {
  return chromium.launchPersistentContext(userDir, {
    executablePath,
    headless: true,
    args: CHROME_ARGS,
    viewport: { width: 1440, height: 900 },
  });
}

async function openHelper(page: Page, base: string): Promise<void> {
  await page.goto(`${base}bench/page.html`);
  await page.waitForFunction(() => 'tidemarkBench' in window, null, { timeout: 60_000 });
}

/** Brings a cell into view and gives it focus (the grid renders only rows near the viewport). */
async function focusCell(page: Page, rowIndex: number, key: string): Promise<boolean> {
  return page.evaluate(
    async ({ rowIndex, key }) => {
      const frame = () => new Promise<void>((r) => requestAnimationFrame(() => r()));
      const grid = (document.querySelector('tm-app') as AppRoot).shadowRoot.querySelector('tm-grid') as GridEl;
      const g = grid.shadowRoot!;
      const scroller = g.querySelector<HTMLElement>('.scroller')!;
      const find = () => g.querySelector<HTMLElement>(`tbody tr[aria-rowindex="${rowIndex + 2}"] [data-col="${key}"]`);
      for (let attempt = 0; attempt < 30; attempt++) {
        const cell = find();
        if (cell) {
          cell.scrollIntoView({ block: 'center', inline: 'center' });
          await frame();
          await frame();
          const again = find();
          if (!again) continue;
          again.focus();
          await frame();
          await grid.updateComplete;
          return again.getAttribute('tabindex') === '0';
        }
        const rowPx = g.querySelector<HTMLElement>('tbody tr[role="row"]')?.offsetHeight || 48;
        scroller.scrollTop = Math.max(0, rowIndex * rowPx - scroller.clientHeight / 2);
        await frame();
        await frame();
      }
      return false;
    },
    { rowIndex, key },
  );
}

/** Whether the trends panel under the grid is open (its toggle in the worksheet header). */
async function trendsOpen(page: Page): Promise<boolean> {
  return page.evaluate(() => {
    const root = (document.querySelector('tm-app') as AppRoot).shadowRoot;
    const b = [...root.querySelectorAll('button')].find((x) => x.textContent?.trim() === 'Trends');
    if (!b) throw new Error('no Trends toggle');
    return b.getAttribute('aria-pressed') === 'true';
  });
}

/** Opens or closes the trends panel with its toggle. */
async function setTrends(page: Page, open: boolean): Promise<void> {
  if ((await trendsOpen(page)) === open) return;
  await page.evaluate(() => {
    const root = (document.querySelector('tm-app') as AppRoot).shadowRoot;
    [...root.querySelectorAll('button')].find((x) => x.textContent?.trim() === 'Trends')?.click();
  });
  await page.waitForFunction(
    (open) => Boolean((document.querySelector('tm-app') as AppRoot).shadowRoot.querySelector('tm-trends')) === open,
    open,
  );
}

async function measureEdits(page: Page, plan: readonly PlannedEdit[], warmup: number): Promise<number[]> {
  const samples: number[] = [];
  let wrong = 0;
  for (const [i, edit] of plan.entries()) {
    if (!(await focusCell(page, edit.rowIndex, edit.key))) throw new Error(`could not focus row ${edit.rowIndex} ${edit.key}`);
    await page.keyboard.type(edit.text);
    await page.waitForFunction(
      (text) =>
        (
          (document.querySelector('tm-app') as AppRoot).shadowRoot.querySelector('tm-grid')?.shadowRoot
            ?.activeElement as HTMLInputElement | null
        )?.value === text,
      edit.text,
      { timeout: 30_000 },
    );
    const before = await page.evaluate(() => (window as unknown as BenchWindow).__tmSamples.length);
    await page.evaluate(() => {
      (window as unknown as BenchWindow).__tmArm = true;
    });
    await page.keyboard.press('Enter');
    await page.waitForFunction(
      (n) =>
        (window as unknown as BenchWindow).__tmSamples.length > n &&
        /All changes saved/.test((document.querySelector('tm-app') as AppRoot).shadowRoot.querySelector('.save')?.textContent ?? ''),
      before,
      { timeout: 60_000 },
    );
    const stored = await page.evaluate(
      ({ rowIndex, key }) =>
        ((document.querySelector('tm-app') as AppRoot).shadowRoot.querySelector('tm-grid') as GridEl).worksheet.rows[rowIndex]?.cells[key]
          ?.value,
      { rowIndex: edit.rowIndex, key: edit.key },
    );
    if (stored !== edit.cell.value) wrong += 1;
    const sample = await page.evaluate((n) => (window as unknown as BenchWindow).__tmSamples[n]!, before);
    if (i >= warmup) samples.push(sample);
  }
  if (wrong > 0) throw new Error(`${wrong} edits did not land in the intended cell`);
  return samples;
}

interface BrowserSize {
  rows: number;
  /** Edit to paint on the screen as the app opens this worksheet (trends open up to 300 rows). */
  edit: Stats;
  /** Whether the trends panel was open as the worksheet opened. */
  trendsOpenAtStart: boolean;
  editTrendsOpen: Stats;
  editTrendsClosed: Stats;
  commit: Stats;
}

async function editToPaint(
  executablePath: string,
  base: string,
  rows: number,
  plan: readonly PlannedEdit[],
  warmup: number,
  commits: number,
): Promise<BrowserSize> {
  const userDir = await mkdtemp(join(tmpdir(), 'tidemark-bench-'));
  const context = await launch(executablePath, userDir);
  try {
    const page = context.pages()[0] ?? (await context.newPage());
    await openHelper(page, base);
    await page.evaluate((rows) => (window as unknown as BenchWindow).tidemarkBench.seed({ worksheets: 1, rows }), rows);
    const commitTimes = await page.evaluate((o) => (window as unknown as BenchWindow).tidemarkBench.commitLatency(o), { rows, commits });
    await page.addInitScript(EDIT_PROBE);
    await page.goto(base);
    await page.waitForFunction(appReady, null, { timeout: 180_000 });
    const half = Math.floor(plan.length / 2);
    // Half the edits with the trends panel under the grid open, half with it closed; the app opens
    // long worksheets with it closed, and that is the screen the targets are judged on.
    const trendsOpenAtStart = await trendsOpen(page);
    await setTrends(page, true);
    const open = stats(await measureEdits(page, plan.slice(0, half), warmup));
    await setTrends(page, false);
    const closed = stats(await measureEdits(page, plan.slice(half), warmup));
    return {
      rows,
      edit: trendsOpenAtStart ? open : closed,
      trendsOpenAtStart,
      editTrendsOpen: open,
      editTrendsClosed: closed,
      commit: stats(commitTimes),
    };
  } finally {
    await context.close();
    await rm(userDir, { recursive: true, force: true });
  }
}

async function coldLoad(executablePath: string, base: string, runs: number) {
  const userDir = await mkdtemp(join(tmpdir(), 'tidemark-bench-cold-'));
  try {
    let context = await launch(executablePath, userDir);
    const page = context.pages()[0] ?? (await context.newPage());
    await openHelper(page, base);
    const seeded = await page.evaluate(() => (window as unknown as BenchWindow).tidemarkBench.seed({ worksheets: 200, rows: 100 }));
    // The first visit: loads the app and installs its service worker.
    await page.goto(base);
    await page.waitForFunction(appReady, null, { timeout: 120_000 });
    await page.waitForFunction(() => Boolean(navigator.serviceWorker?.controller), null, { timeout: 60_000 });
    await context.close();
    const loads: ColdLoadProbe[] = [];
    for (let i = 0; i < runs; i++) {
      context = await launch(executablePath, userDir);
      const p = context.pages()[0] ?? (await context.newPage());
      await p.addInitScript(COLD_PROBE);
      await p.goto(base);
      await p.waitForFunction(() => Boolean((window as unknown as BenchWindow).__tmCold), null, { timeout: 120_000 });
      const r = await p.evaluate(() => (window as unknown as BenchWindow).__tmCold!);
      if (!r.label.includes('Bench 200')) throw new Error(`cold load opened "${r.label}", not the last worksheet used`);
      loads.push(r);
      await context.close();
    }
    return {
      worksheets: 200,
      rowsEach: 100,
      seedMs: Math.round(seeded.ms),
      load: stats(loads.map((l) => l.painted)),
      responseEnd: stats(loads.map((l) => l.responseEnd ?? Number.NaN)),
      fromServiceWorker: loads.every((l) => l.controlled),
    };
  } finally {
    await rm(userDir, { recursive: true, force: true });
  }
}

// --- Main -----------------------------------------------------------------------------------

export async function runBench(tools: BenchTools): Promise<void> {
  const { root, args } = tools;
  const quick = args.includes('--quick');
  const outArg = args.indexOf('--out');
  const executablePath = tools.findChrome();
  if (!executablePath) {
    console.error('No Chrome or Chromium found: install one (Debian/Ubuntu: sudo apt-get install chromium) or set CHROME_PATH.');
    process.exitCode = 1;
    return;
  }
  const work = await mkdtemp(join(tmpdir(), 'tidemark-bench-site-'));
  let server: { server: { close(): unknown }; port: number } | undefined;
  try {
    say(`Tidemark bench${quick ? ' (quick)' : ''}: building...`);
    const site = join(work, 'site');
    const built = await tools.build({ quiet: true, outDir: site });
    const sw = await readFile(join(site, 'sw.js'));
    const swGzipBytes = gzipSync(sw, { level: 9 }).length;
    const shipped = {
      appJsBytes: built.bytes,
      appJsGzipBytes: built.gzipBytes,
      swGzipBytes,
      totalGzipBytes: built.gzipBytes + swGzipBytes,
    };

    say('Core (Node): recompute per edit, incremental vs full...');
    const coreResults: CoreSizeResult[] = coreBench({
      sizes: SIZES,
      edits: (rows) => (quick ? 6 : rows >= 5000 ? 20 : 40),
      onSize: (r) =>
        say(`  ${r.rows} rows: incremental p50 ${ms(percentile(r.incrementalMs, 50))} ms, full p50 ${ms(percentile(r.naiveMs, 50))} ms`),
    });
    if (coreResults.some((r) => !r.agree))
      throw new Error('the incremental and full recomputes disagree: fix that before trusting any figure');

    // The site: the production build plus the helper page, served with the app's CSP.
    await mkdir(join(site, 'bench'), { recursive: true });
    await bundle(root, 'scripts/bench/page.ts', join(site, 'bench', 'page.js'));
    await writeFile(
      join(site, 'bench', 'page.html'),
      '<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Tidemark bench helper</title></head><body><script type="module" src="./page.js"></script></body></html>\n',
    );
    server = await tools.serveDist({ dir: `${site}/` });
    const base = `http://127.0.0.1:${server.port}/`;

    const probe = await chromium.launch({ executablePath, headless: true, args: CHROME_ARGS });
    const info = machine(probe.version());
    await probe.close();

    const browser: BrowserSize[] = [];
    for (const rows of SIZES) {
      const warmup = 3;
      const count = quick ? 5 : rows >= 5000 ? 25 : 30;
      say(`Browser: ${rows} rows, ${2 * count} edits to paint...`);
      const r = await editToPaint(executablePath, base, rows, editPlan(rows, 2 * (count + warmup)), warmup, quick ? 15 : 60);
      say(
        `  edit to paint, trends open p50 ${ms(r.editTrendsOpen.p50)} / p95 ${ms(r.editTrendsOpen.p95)} ms, closed ${ms(r.editTrendsClosed.p50)} / ${ms(r.editTrendsClosed.p95)} ms (opens ${r.trendsOpenAtStart ? 'open' : 'closed'}); IndexedDB commit p50 ${ms(r.commit.p50)} / p95 ${ms(r.commit.p95)} ms`,
      );
      browser.push(r);
    }
    say('Browser: cold load of a notebook of 200 worksheets of 100 rows...');
    const cold = await coldLoad(executablePath, base, quick ? 2 : 5);
    say(`  cold load p50 ${ms(cold.load.p50)} ms, max ${ms(cold.load.max)} ms`);
    info.loadAverageAtEnd = loadavg().map((v) => Math.round(v * 100) / 100);

    const coreSummary = coreResults.map((r) => ({
      rows: r.rows,
      edits: r.edits,
      incremental: stats(r.incrementalMs),
      naive: stats(r.naiveMs),
      speedup: percentile(r.naiveMs, 50) / percentile(r.incrementalMs, 50),
    }));
    const b = (rows: number) => browser.find((x) => x.rows === rows)!;
    const c = (rows: number) => coreSummary.find((x) => x.rows === rows)!;
    const commitP95 = Math.max(...browser.map((x) => x.commit.p95));
    const kb = shipped.totalGzipBytes / 1024;
    const targets = [
      {
        what: 'Edit to paint p95 at 500 rows',
        value: b(500).edit.p95,
        unit: 'ms',
        target: `≤ ${TARGETS.editP95At500}`,
        met: b(500).edit.p95 <= TARGETS.editP95At500,
      },
      {
        what: 'Edit to paint p95 at 5,000 rows',
        value: b(5000).edit.p95,
        unit: 'ms',
        target: `≤ ${TARGETS.editP95At5000}`,
        met: b(5000).edit.p95 <= TARGETS.editP95At5000,
      },
      {
        what: 'Core speed-up over full recompute at 5,000 rows',
        value: c(5000).speedup,
        unit: '×',
        target: `≥ ${TARGETS.coreSpeedupAt5000}`,
        met: c(5000).speedup >= TARGETS.coreSpeedupAt5000,
      },
      {
        what: 'IndexedDB commit p95 (worst size)',
        value: commitP95,
        unit: 'ms',
        target: `≤ ${TARGETS.commitP95}`,
        met: commitP95 <= TARGETS.commitP95,
      },
      {
        what: 'Cold load, 200 × 100 rows (p95 of runs)',
        value: cold.load.p95,
        unit: 'ms',
        target: `≤ ${TARGETS.coldLoadMs}`,
        met: cold.load.p95 <= TARGETS.coldLoadMs,
      },
      { what: 'JavaScript shipped, gzipped', value: kb, unit: 'KB', target: `≤ ${TARGETS.gzipKb}`, met: kb <= TARGETS.gzipKb },
    ];

    const result = { date: new Date().toISOString(), quick, machine: info, shipped, core: coreSummary, browser, coldLoad: cold, targets };
    const dir = join(root, 'bench-results');
    await mkdir(dir, { recursive: true });
    const out = outArg >= 0 && args[outArg + 1] ? args[outArg + 1]! : join(dir, `bench-${result.date.replace(/[:.]/g, '-')}.json`);
    const json = `${JSON.stringify(result, null, 2)}\n`;
    await writeFile(out, json);
    await writeFile(join(dir, 'latest.json'), json);

    say('');
    say(
      `Tidemark bench ${result.date.slice(0, 16)}Z — ${info.cores} cores (${info.cpu}), ${info.memoryGb} GB, Node ${info.node}, Chromium ${info.chromium}, load average ${String(info.loadAverageAtStart[0] ?? '?')} at start, ${String(info.loadAverageAtEnd[0] ?? '?')} at end`,
    );
    const cell = (text: string) => text.padStart(14);
    say(`${'Measure'.padEnd(46)}${cell('50 rows')}${cell('500 rows')}${cell('5,000 rows')}`);
    const row = (label: string, f: (n: number) => string) => say(`${label.padEnd(46)}${SIZES.map((n) => cell(f(n))).join('')}`);
    row('Edit to paint, screen as opened, p50 / p95', (n) => `${ms(b(n).edit.p50)} / ${ms(b(n).edit.p95)}`);
    row('  trends panel open (ms)', (n) => `${ms(b(n).editTrendsOpen.p50)} / ${ms(b(n).editTrendsOpen.p95)}`);
    row('  trends panel closed (ms)', (n) => `${ms(b(n).editTrendsClosed.p50)} / ${ms(b(n).editTrendsClosed.p95)}`);
    row('Core recompute per edit, p50 / p95 (ms)', (n) => `${ms(c(n).incremental.p50)} / ${ms(c(n).incremental.p95)}`);
    row('Naive full recompute, p50 / p95 (ms)', (n) => `${ms(c(n).naive.p50)} / ${ms(c(n).naive.p95)}`);
    row('Speed-up, naive ÷ core (medians)', (n) => `${c(n).speedup.toFixed(1)}×`);
    row('IndexedDB commit, p50 / p95 (ms)', (n) => `${ms(b(n).commit.p50)} / ${ms(b(n).commit.p95)}`);
    say(
      `${'Cold load, 200 worksheets × 100 rows (ms)'.padEnd(46)}p50 ${ms(cold.load.p50)}, p95 ${ms(cold.load.p95)} over ${cold.load.n} new browser processes${cold.fromServiceWorker ? ', app from the service worker' : ''}`,
    );
    say(`${'JavaScript shipped, gzipped'.padEnd(46)}${kb.toFixed(1)} KB (app.js ${(shipped.appJsBytes / 1024).toFixed(0)} KB minified)`);
    say('');
    for (const t of targets)
      say(
        `${t.met ? 'MET    ' : 'NOT MET'}  ${t.what}: ${t.unit === '×' ? t.value.toFixed(1) : ms(t.value)} ${t.unit} (target ${t.target} ${t.unit})`,
      );
    say(`\nWritten: ${out}`);
  } finally {
    server?.server.close();
    await rm(work, { recursive: true, force: true });
  }
}
