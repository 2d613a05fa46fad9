/**
 * Public API of the goal engine (pure; no DOM). The app, the exports and the command line use
 * only what is exported here.
 */
export { evaluate, evaluateGoal, statusReport, worksheetSetIds, type EvaluateOptions, type StatusReport } from './engine.js';
export type { GoalStatus } from './status.js';
export type { TargetInfo, VolumeInfo } from './rules.js';
export { targetRangeText } from './rules.js';
export {
  CUSTOM_SET_ID,
  DEFAULT_SET_IDS,
  GOAL_SETS,
  GoalRegistry,
  UnknownGoalSetError,
  createDefaultRegistry,
  defaultRegistry,
} from './registry.js';
export { GoalDef, GoalSetDef, GoalStatusKind, Predicate, Rule, type RuleKind, type TargetTest } from './schema.js';
export { suggestTimeZero, type CriterionHit, type TimeZeroSuggestion, type TimeZeroSuggestions } from './suggest.js';
export { SEP1_ORGAN, SEP1_SIRS, sep1OrganCriteria, sep1SirsCriteria, sep1Oliguria } from './sep1-criteria.js';
export {
  SECONDS_WINDOW_MINUTES,
  elapsedSinceTimeZero,
  goalClocks,
  measureAges,
  nextTickMs,
  panelOrder,
  type GoalClock,
  type MeasureAge,
} from './clocks.js';
