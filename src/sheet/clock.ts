/**
 * The one time source. Everything that needs "now" receives a Clock; nothing in the core reads
 * the wall clock itself, so tests run on fake time.
 */
export interface Clock {
  /** Milliseconds since the Unix epoch. */
  now(): number;
}

/** The device clock. Only the app shell and the command-line entry create one. */
// eslint-disable-next-line no-restricted-syntax -- the one place the device clock is read
export const systemClock: Clock = { now: () => Date.now() };

/** A clock that stands still until moved: for tests and for `--at`. */
export class FixedClock implements Clock {
  constructor(private ms: number) {}
  now(): number {
    return this.ms;
  }
  set(ms: number): void {
    this.ms = ms;
  }
  advance(ms: number): void {
    this.ms += ms;
  }
}

/** Milliseconds to an ISO instant in UTC. */
export function toInstant(ms: number): string {
  return new Date(ms).toISOString();
}

export const MINUTE_MS = 60_000;
