// Nothing leaves the page: the production build in Chromium, with its Content-Security-Policy.
// - The policy (HTTP header and meta tag) allows connections, scripts, styles, images and
//   workers from the app's own origin only, no 'unsafe-*' source, and Trusted Types for the DOM.
// - A scripted session through the real screens (new worksheet, rows and values typed with the
//   keyboard, hostile text in every field, facts, exports of every kind, import of a backup,
//   trends, another worksheet) makes no request at all, counted both by the browser (DevTools
//   protocol) and by the app's own server.
// - Requests that script tries anyway (fetch, XHR, WebSocket, beacon, EventSource, image, a
//   worker's fetch) are refused by the policy, and a sink server on another port receives none.
// - Raw innerHTML with a string is refused (Trusted Types), and so is eval.
// Expected behaviour: W3C CSP3 (connect-src, default-src fallback), W3C Trusted Types
// (require-trusted-types-for), summarised in reference/reliability-security-performance.md §5.
import { createServer, type Server } from 'node:http';
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page, Request } from 'playwright-core';
import { buildAndServe, Chromium, waitForApp, writeFigures, type ServedApp } from './harness.js';
import { appMessages, focusCell, shownWorksheet } from './page-scripts.js';
import { PAYLOADS } from './payloads.js';

let app: ServedApp;
let chrome: Chromium;
let sink: Server;
let sinkPort = 0;
const sinkHits: string[] = [];
const figures: Record<string, unknown> = {};

beforeAll(async () => {
  app = await buildAndServe();
  chrome = await Chromium.start();
  sink = createServer((req, res) => {
    sinkHits.push(`${req.method ?? ''} ${req.url ?? ''}`);
    res.writeHead(200, { 'Access-Control-Allow-Origin': '*' }).end('{}');
  });
  await new Promise<void>((r) => sink.listen(0, '127.0.0.1', () => r()));
  sinkPort = (sink.address() as { port: number }).port;
}, 120_000);

afterAll(async () => {
  writeFigures('network', figures);
  await chrome?.close();
  sink?.closeAllConnections();
  await new Promise<void>((r) => (sink ? sink.close(() => r()) : r()));
  await app?.close();
}, 60_000);

/** Directive name -> sources. */
function parseCsp(policy: string): Map<string, string[]> {
  const map = new Map<string, string[]>();
  for (const part of policy.split(';')) {
    const [name, ...sources] = part.trim().split(/\s+/);
    if (name) map.set(name.toLowerCase(), sources);
  }
  return map;
}

/** Records the browser's own view of every request a page (and its workers) makes. */
async function recordRequests(page: Page): Promise<{ urls: string[] }> {
  const log = { urls: [] as string[] };
  const cdp = await page.context().newCDPSession(page);
  await cdp.send('Network.enable');
  cdp.on('Network.requestWillBeSent', (e: { request: { url: string } }) => log.urls.push(e.request.url));
  page.on('request', (r: Request) => log.urls.push(r.url()));
  page.context().on('request', (r: Request) => log.urls.push(r.url()));
  return log;
}

const networkUrl = (u: string) => /^(https?|wss?|ftp):/i.test(u);

describe('the Content-Security-Policy', () => {
  it('allows nothing beyond the app’s own origin and no unsafe source, in the header and the meta tag', async () => {
    const res = await fetch(app.url);
    const header = res.headers.get('content-security-policy') ?? '';
    const html = await res.text();
    const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]+)"/.exec(html)?.[1];
    expect(header).toBe(app.csp);
    expect(meta).toBe(app.csp);
    const csp = parseCsp(header);
    expect(csp.get('default-src')).toEqual(["'none'"]);
    expect(csp.get('connect-src')).toEqual(["'self'"]);
    expect(csp.get('script-src')).toEqual(["'self'"]);
    expect(csp.get('object-src')).toEqual(["'none'"]);
    expect(csp.get('base-uri')).toEqual(["'none'"]);
    expect(csp.get('form-action')).toEqual(["'none'"]);
    expect(csp.get('require-trusted-types-for')).toEqual(["'script'"]);
    expect(csp.get('trusted-types')).toEqual(['lit-html', 'tidemark-sw']);
    for (const [name, sources] of csp) {
      if (name === 'require-trusted-types-for' || name === 'trusted-types') continue;
      for (const s of sources) {
        // Only keywords for this origin or none, and in-page data/blob images: no host, no scheme
        // that reaches out, no wildcard, no unsafe keyword.
        expect(["'self'", "'none'", 'data:', 'blob:'], `${name} ${s}`).toContain(s);
      }
      if (sources.includes('data:') || sources.includes('blob:')) expect(name, 'only images may be data:/blob:').toBe('img-src');
    }
  });
});

describe('a whole scripted session', () => {
  it('makes no request, and every request script attempts is refused', async () => {
    const page = await chrome.context().newPage();
    await page.addInitScript(() => {
      const w = window as unknown as { __violations: string[]; __xss: (n: number) => void; __xssHits: number[] };
      w.__violations = [];
      w.__xssHits = [];
      w.__xss = (n) => w.__xssHits.push(n);
      document.addEventListener('securitypolicyviolation', (e) => w.__violations.push(`${e.violatedDirective} ${e.blockedURI}`));
    });
    const dialogs: string[] = [];
    page.on('dialog', (d) => {
      dialogs.push(d.message());
      void d.dismiss();
    });
    const seen = await recordRequests(page);
    await page.goto(app.url, { waitUntil: 'load' });
    await waitForApp(page);
    const loadRequests = seen.urls.filter(networkUrl);
    const foreign = loadRequests.filter((u) => !u.startsWith(app.origin));
    expect(foreign, 'requests to other origins while loading').toEqual([]);
    await page.waitForTimeout(1500); // the service worker installs and caches the shell
    const serverBefore = app.requests.length;
    // Both counters do see requests (the page's own load), so zero later means none were made.
    expect(serverBefore).toBeGreaterThan(0);
    expect(loadRequests.length).toBeGreaterThan(0);
    const browserBefore = seen.urls.length;
    let steps = 0;
    const step = async (what: string, fn: () => Promise<unknown>) => {
      try {
        await fn();
      } catch (e) {
        throw new Error(`step "${what}" failed: ${(e as Error).message}`, { cause: e });
      }
      steps += 1;
    };

    // A new worksheet named with hostile text, through the notebook form.
    const label = PAYLOADS[1]!;
    await step('new worksheet', async () => {
      await page.locator('#new-label').fill(label);
      await page.locator('#new-label').press('Enter');
      await page.waitForFunction(
        (l) =>
          (document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-grid') as unknown as { worksheet?: { label: string } })
            ?.worksheet?.label === l,
        label,
      );
    });
    // Rows and values through the grid with the keyboard, hostile text in the text cells.
    for (let r = 0; r < 3; r++) {
      await step(`row ${r}`, async () => {
        await page.getByRole('button', { name: 'Add row now' }).click();
        await page.waitForFunction(
          (n) =>
            ((document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-grid') as unknown as { worksheet?: { rows: unknown[] } })
              ?.worksheet?.rows.length ?? 0) > n,
          r,
        );
      });
    }
    const rows = (await page.evaluate(shownWorksheet)).rows as { id: string }[];
    const typed: [string, string][] = [
      ['map', '58'],
      ['hr', '124'],
      ['lactate', '4.4'],
      ['note', PAYLOADS[0]!],
      ['antibiotic', PAYLOADS[3]!],
    ];
    for (const [i, row] of rows.entries()) {
      for (const [key, value] of typed) {
        await step(`type ${key}`, async () => {
          if (!(await page.evaluate(focusCell, { rowId: row.id, key }))) throw new Error(`no ${key} cell`);
          await page.keyboard.type(key === 'note' || key === 'antibiotic' ? PAYLOADS[(i * 7 + key.length) % PAYLOADS.length]! : value);
          await page.keyboard.press('Enter');
        });
      }
    }
    await page.waitForFunction(() =>
      document.querySelector('tm-app')?.shadowRoot?.querySelector('.save')?.textContent?.includes('All changes saved'),
    );
    // Facts with a hostile time-zero reason.
    await step('facts', async () => {
      const facts = page.locator('tm-facts');
      if (!(await facts.count())) await page.getByRole('button', { name: 'Facts & time zero' }).click();
      await page.getByRole('button', { name: 'Close' }).first().click();
    });
    // Every export, and an import of the notebook backup.
    await step('exports', async () => {
      await page.getByRole('button', { name: 'Export' }).click();
      for (const name of ['CSV (spreadsheet)', 'FHIR R4 Bundle', 'Backup this worksheet', 'Backup whole notebook']) {
        const download = page.waitForEvent('download');
        await page.getByRole('button', { name }).click();
        const d = await download;
        const path = `${app.scratch}/${d.suggestedFilename()}`;
        await d.saveAs(path);
        if (name === 'Backup whole notebook') {
          await page.locator('tm-exports input[type="file"]').setInputFiles(path);
          await page.getByRole('button', { name: 'Import with these choices' }).click();
          await page.waitForFunction(() =>
            document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-exports')?.shadowRoot?.textContent?.includes('Imported:'),
          );
        } else {
          expect(readFileSync(path, 'utf8').length).toBeGreaterThan(50);
        }
      }
      await page.getByRole('button', { name: 'Copy note' }).click();
    });
    await step('trends and the demo worksheet', async () => {
      await page.getByRole('button', { name: 'Trends' }).click();
      await page.getByRole('button', { name: 'Trends' }).click();
      await page
        .getByRole('button', { name: /DEMO bay 4/ })
        .first()
        .click();
      await page.waitForFunction(
        () =>
          (document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-grid') as unknown as { worksheet?: { demo?: boolean } })
            ?.worksheet?.demo === true,
      );
    });
    await page.waitForTimeout(1000);
    const sessionServer = app.requests.slice(serverBefore);
    const sessionBrowser = seen.urls.slice(browserBefore).filter(networkUrl);
    expect(sessionServer, 'requests the app server received during the session').toEqual([]);
    expect(sessionBrowser, 'requests the browser made during the session').toEqual([]);
    expect((await page.evaluate(appMessages)).save).toMatch(/All changes saved/);

    // Script tries to reach out anyway: every attempt is refused and the sink hears nothing.
    const target = `http://127.0.0.1:${sinkPort}`;
    const attempts = await page.evaluate(async (t) => {
      const out: Record<string, string> = {};
      const attempt = async (name: string, fn: () => unknown) => {
        try {
          await fn();
          out[name] = 'not refused';
        } catch (e) {
          out[name] = `refused (${(e as Error).name})`;
        }
      };
      await attempt('fetch', () => fetch(`${t}/fetch`));
      await attempt('fetch no-cors', () => fetch(`${t}/no-cors`, { mode: 'no-cors' }));
      await attempt(
        'xhr',
        () =>
          new Promise((resolve, reject) => {
            const x = new XMLHttpRequest();
            x.open('GET', `${t}/xhr`);
            x.onload = resolve;
            x.onerror = () => reject(new TypeError('xhr error'));
            x.send();
          }),
      );
      await attempt(
        'websocket',
        () =>
          new Promise((resolve, reject) => {
            const ws = new WebSocket(`ws://127.0.0.1:${t.split(':')[2] ?? ''}/ws`);
            ws.onopen = resolve;
            ws.onerror = () => reject(new TypeError('websocket error'));
          }),
      );
      // sendBeacon only queues (it returns true); the policy blocks the send itself, reported below.
      navigator.sendBeacon(`${t}/beacon`, 'x');
      await attempt(
        'eventsource',
        () =>
          new Promise((resolve, reject) => {
            const es = new EventSource(`${t}/es`);
            es.onopen = resolve;
            es.onerror = () => {
              es.close();
              reject(new TypeError('eventsource error'));
            };
          }),
      );
      await attempt(
        'image',
        () =>
          new Promise((resolve, reject) => {
            const img = new Image();
            img.onload = resolve;
            img.onerror = () => reject(new TypeError('image error'));
            img.src = `${t}/img.png`;
          }),
      );
      await attempt('innerHTML', () => {
        // eslint-disable-next-line no-restricted-syntax -- on purpose: Trusted Types must refuse it
        document.createElement('div').innerHTML = '<b>x</b>';
      });
      await attempt('eval', () => eval('1 + 1'));
      // eslint-disable-next-line @typescript-eslint/no-implied-eval, @typescript-eslint/no-unsafe-call -- on purpose: the policy must refuse it
      await attempt('new Function', () => new Function('return 1')());
      return out;
    }, target);
    await page.waitForTimeout(500);
    for (const [name, result] of Object.entries(attempts)) expect(result, name).toMatch(/^refused/);
    expect(sinkHits, 'requests that reached the sink server').toEqual([]);
    const violations = await page.evaluate(() => (window as unknown as { __violations: string[] }).__violations);
    expect(violations.some((v) => v.startsWith('connect-src'))).toBe(true);
    expect(
      violations.some((v) => v.startsWith('connect-src') && v.includes('/beacon')),
      'the beacon was blocked',
    ).toBe(true);
    // Nothing the session itself did was blocked (a block would mean the app tried something).
    const before = violations.filter((v) => !v.includes(`127.0.0.1:${sinkPort}`) && !/eval|trusted-types|require-trusted/.test(v));
    expect(before, 'policy violations caused by the app').toEqual([]);
    expect(dialogs).toEqual([]);
    expect(await page.evaluate(() => (window as unknown as { __xssHits: number[] }).__xssHits)).toEqual([]);
    figures['session'] = {
      steps,
      requestsDuringSession: sessionServer.length + sessionBrowser.length,
      requestsWhileLoading: loadRequests.length,
      foreignRequests: foreign.length,
      attemptsRefused: Object.keys(attempts).length + 1,
      sinkHits: sinkHits.length,
    };
    await page.close();
  }, 300_000);
});
