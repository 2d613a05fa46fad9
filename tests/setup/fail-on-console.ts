// Vitest setup: a test fails if it writes to console.error or console.warn unexpectedly.
// Output a test expects must be captured explicitly, which also silences it:
//   const warn = vi.spyOn(console, 'warn').mockImplementation(() => {});
//   ...; expect(warn).toHaveBeenCalledWith(...);
// (A spy with its own implementation replaces the recorder below for that test.)
import { afterEach, beforeEach } from 'vitest';
import { format } from 'node:util';

type Level = 'error' | 'warn';
const LEVELS: readonly Level[] = ['error', 'warn'];
const originals = { error: console.error, warn: console.warn };
let unexpected: string[] = [];

beforeEach(() => {
  unexpected = [];
  for (const level of LEVELS) {
    console[level] = (...args: unknown[]) => {
      unexpected.push(`console.${level}: ${format(...args)}`);
      originals[level].apply(console, args);
    };
  }
});

afterEach(() => {
  for (const level of LEVELS) console[level] = originals[level];
  const found = unexpected;
  unexpected = [];
  if (found.length > 0) {
    throw new Error(`Unexpected console output (spy on console to expect it):\n${found.join('\n')}`);
  }
});
