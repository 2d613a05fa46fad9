// Node smoke test for the toolchain: vitest runs TypeScript from tests/, and the installed
// mathjs is not one of the releases with known arbitrary-code-execution bugs in its parser.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

// Source: mathjs HISTORY.md, "2026-04-07, 15.2.0: Fix: two security vulnerabilities that allowed
// executing arbitrary JavaScript via the expression parser" (GitHub advisories GHSA-5v89-rwgr-qj6g
// and GHSA-29qv-4j9f-fjw5, affecting >= 13.1.0 < 15.2.0; no workaround except upgrading).
const MATHJS_MIN = [15, 2, 0] as const;

function readJson(path: string): Record<string, unknown> {
  return JSON.parse(readFileSync(new URL(path, import.meta.url), 'utf8')) as Record<string, unknown>;
}

/** Parses the leading "major.minor.patch" of a version or range such as "^15.2.0". */
function versionParts(text: string): [number, number, number] {
  const match = /(\d+)\.(\d+)\.(\d+)/.exec(text);
  if (!match) throw new Error(`Not a version: ${text}`);
  return [Number(match[1]), Number(match[2]), Number(match[3])];
}

function atLeast(version: readonly number[], minimum: readonly number[]): boolean {
  for (let i = 0; i < minimum.length; i += 1) {
    const a = version[i] ?? 0;
    const b = minimum[i] ?? 0;
    if (a !== b) return a > b;
  }
  return true;
}

describe('toolchain', () => {
  it('compares versions numerically, not as text', () => {
    expect(atLeast(versionParts('15.10.0'), MATHJS_MIN)).toBe(true);
    expect(atLeast(versionParts('15.2.0'), MATHJS_MIN)).toBe(true);
    expect(atLeast(versionParts('15.1.9'), MATHJS_MIN)).toBe(false);
    expect(atLeast(versionParts('9.99.99'), MATHJS_MIN)).toBe(false);
  });

  it('has mathjs >= 15.2.0 installed', () => {
    const installed = readJson('../../node_modules/mathjs/package.json')['version'];
    expect(typeof installed).toBe('string');
    expect(atLeast(versionParts(String(installed)), MATHJS_MIN), `mathjs ${String(installed)}`).toBe(true);
  });

  it('declares mathjs with a lower bound of at least 15.2.0 in package.json', () => {
    const dependencies = readJson('../../package.json')['dependencies'] as Record<string, string>;
    const range = dependencies['mathjs'];
    expect(range).toBeDefined();
    expect(atLeast(versionParts(String(range)), MATHJS_MIN), `mathjs range ${String(range)}`).toBe(true);
  });
});
