/**
 * Building blocks shared by the published goal sets (plain data).
 */
import type { Predicate } from '../schema.js';

/** Vasopressor infusions charted as rates (design.md measure keys). */
export const VASOPRESSOR_KEYS = ['norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'vasopressin'];

/** Minutes in common windows. */
export const H1 = 60;
export const H3 = 180;
export const H4 = 240;
export const H6 = 360;
export const H24 = 1440;
export const H48 = 2880;

/** A vasopressor running (rate above zero) from 6 h before time zero on. */
export const ON_VASOPRESSOR: Predicate = { kind: 'any-value', keys: VASOPRESSOR_KEYS, op: '>', value: 0, lookbackMinutes: H6 };

/** Any lactate above 2 mmol/L from 6 h before time zero on. */
export const LACTATE_RAISED: Predicate = { kind: 'any-value', keys: ['lactate'], op: '>', value: 2, lookbackMinutes: H6 };
