#!/usr/bin/env node
// Takes a headless-Chromium screenshot of a running Tidemark page, for looking at what we build.
// Usage: node scripts/screenshot.mjs URL OUT.png [width] [height] [--wait=ms] [--click="Button name"]...
// Each --click presses the button with that accessible name (inside shadow roots too), in order.
// Uses playwright-core with the installed Chromium (never downloads a browser).
import { chromium } from 'playwright-core';
import { findChrome } from './find-chrome.mjs';

const [url, out, w = '1600', h = '1000'] = process.argv.slice(2).filter((a) => !a.startsWith('--'));
const wait = Number((process.argv.find((a) => a.startsWith('--wait=')) ?? '--wait=4000').slice(7));
if (!url || !out) {
  console.error('Usage: node scripts/screenshot.mjs URL OUT.png [width] [height] [--wait=ms]');
  process.exit(2);
}
const browser = await chromium.launch({
  executablePath: findChrome() ?? undefined,
  headless: true,
  args: [
    '--no-sandbox',
    '--disable-gpu',
    '--disable-dev-shm-usage',
    '--disable-background-networking',
    '--disable-component-update',
    '--disable-sync',
    '--no-first-run',
  ],
});
const page = await browser.newPage({ viewport: { width: Number(w), height: Number(h) } });
page.on('pageerror', (e) => console.error('page error:', e.message));
page.on('console', (m) => {
  if (m.type() === 'error' || m.type() === 'warning') console.error(`console ${m.type()}:`, m.text());
});
await page.goto(url, { waitUntil: 'load', timeout: 180_000 });
await page.waitForTimeout(wait);
for (const a of process.argv.filter((x) => x.startsWith('--click='))) {
  await page
    .getByRole('button', { name: a.slice(8) })
    .first()
    .click();
  await page.waitForTimeout(500);
}
if (process.argv.includes('--print')) await page.emulateMedia({ media: 'print' });
// --clip=Y:H keeps one band of a long page (easier to look at).
const clip = process.argv.find((a) => a.startsWith('--clip='));
const [cy, ch] = clip ? clip.slice(7).split(':').map(Number) : [];
await page.screenshot(
  clip
    ? { path: out, fullPage: true, clip: { x: 0, y: cy ?? 0, width: Number(w), height: ch ?? Number(h) } }
    : { path: out, fullPage: true },
);
await browser.close();
console.log(`saved ${out}`);
