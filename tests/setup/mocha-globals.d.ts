// Types for the mocha BDD globals that @web/test-runner provides to browser tests (`*_test.ts`).
// (@types/mocha is not installed; this is the subset we use.) Node tests import from 'vitest'.
type MochaDone = (error?: unknown) => void;
type MochaTestFn = (this: unknown, done: MochaDone) => void | Promise<unknown>;
type MochaSuiteFn = (this: unknown) => void;

interface MochaSuiteFunction {
  (title: string, fn: MochaSuiteFn): void;
  only(title: string, fn: MochaSuiteFn): void;
  skip(title: string, fn: MochaSuiteFn): void;
}

interface MochaTestFunction {
  (title: string, fn?: MochaTestFn): void;
  only(title: string, fn?: MochaTestFn): void;
  skip(title: string, fn?: MochaTestFn): void;
}

declare const describe: MochaSuiteFunction;
declare const it: MochaTestFunction;
declare function before(fn: MochaTestFn): void;
declare function after(fn: MochaTestFn): void;
declare function beforeEach(fn: MochaTestFn): void;
declare function afterEach(fn: MochaTestFn): void;
