// The production build fills the service worker's placeholders: the cache is named after the
// bundle hash, so a new deploy gets a new cache and `activate` deletes the old one (the Service
// Worker spec's install/activate lifecycle; the cache-per-version pattern is common practice, no
// source). A placeholder left in place would keep one cache name for every deploy.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Script } from 'node:vm';
import { afterAll, describe, expect, it } from 'vitest';
import { build } from '../../scripts/build.mjs';

const outDir = mkdtempSync(join(tmpdir(), 'tidemark-build-sw-'));
afterAll(() => rmSync(outDir, { recursive: true, force: true }));

describe('built service worker', () => {
  it('names its cache after the bundle hash and lists the shell', async () => {
    const { hash } = await build({ quiet: true, outDir });
    const sw = readFileSync(join(outDir, 'sw.js'), 'utf8');
    expect(sw).toContain(`const CACHE = "tidemark-${hash}";`);
    expect(sw).toContain('["./","./index.html","./assets/app.js","./manifest.webmanifest"]');
    expect(sw).not.toMatch(/'__(CACHE|SHELL)__'/);
    // Still a script that parses (compiled, not run).
    expect(() => new Script(sw, { filename: 'sw.js' })).not.toThrow();
  }, 60_000);
});
