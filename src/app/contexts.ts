/**
 * App-wide services shared through @lit/context: the time source and the user's display
 * preferences. Ordinary data (the worksheet, its derived values) goes down as properties.
 */
import { createContext } from '@lit/context';
import type { Clock } from '../sheet/clock.js';

/** The one injected time source. Tests provide a FixedClock. */
export const clockContext = createContext<Clock>(Symbol('tidemark-clock'));
