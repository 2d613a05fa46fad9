/**
 * Public API of the goal engine (pure; no DOM) for the exports, the command line and the tests.
 * It lists what they use: `npm run knip` reports a re-export nobody imports.
 */
export { evaluate, statusReport, worksheetSetIds } from './engine.js';
export type { GoalStatus } from './status.js';
export {
  CUSTOM_SET_ID,
  DEFAULT_SET_IDS,
  GOAL_SETS,
  GoalRegistry,
  UnknownGoalSetError,
  createDefaultRegistry,
  defaultRegistry,
} from './registry.js';
export { suggestTimeZero } from './suggest.js';
export { sep1OrganCriteria, sep1SirsCriteria, sep1Oliguria } from './sep1-criteria.js';
export { elapsedSinceTimeZero, goalClocks, measureAges, nextTickMs, panelOrder } from './clocks.js';
