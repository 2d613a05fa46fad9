/**
 * CMS / The Joint Commission SEP-1 (Severe Sepsis/Septic Shock Early Management Bundle) as data.
 * Specifications Manual for National Hospital Inpatient Quality Measures, SEP measure set;
 * numerator wording of v5.3 (1Q18–2Q18) (reference file §3). Time zero is the severe sepsis
 * presentation time.
 */
import type { GoalSetDef, Predicate } from '../schema.js';
import { H24, H3, H48, H6, VASOPRESSOR_KEYS } from './common.js';

const SOURCE =
  'CMS/The Joint Commission SEP-1, Specifications Manual for National Hospital Inpatient Quality Measures, SEP measure set (reference file §3)';
const VERSION = 'SEP-1 manual v5.3 numerator';

/** Persistent hypotension: 2 consecutive low readings in the hour after 30 mL/kg ends (reference file §3b). */
export const SEP1_PERSISTENT_HYPOTENSION: Predicate = {
  kind: 'hypotension-after-volume',
  key: 'fluid_ml',
  mlPerKg: 30,
  sbpBelow: 90,
  mapBelow: 65,
  withinMinutes: 60,
  consecutive: 2,
  lookbackMinutes: H6,
};

/** Initial lactate ≥ 4 mmol/L (reference file §3a, septic shock). */
export const SEP1_INITIAL_LACTATE_4: Predicate = { kind: 'initial-value', key: 'lactate', op: '>=', value: 4, lookbackMinutes: H6 };

/** Septic shock: initial lactate ≥ 4, or persistent hypotension after fluids, or a shock time set by the user. */
export const SEP1_SEPTIC_SHOCK: Predicate = {
  kind: 'any',
  of: [SEP1_INITIAL_LACTATE_4, SEP1_PERSISTENT_HYPOTENSION, { kind: 'shock-time-set' }],
};

/** Initial hypotension: two consecutive readings SBP < 90 or MAP < 65 within 6 h either side of time zero. */
export const SEP1_INITIAL_HYPOTENSION: Predicate = {
  kind: 'hypotension',
  sbpBelow: 90,
  mapBelow: 65,
  consecutive: 2,
  lookbackMinutes: H6,
  withinMinutes: H6,
};

export const SEP1: GoalSetDef = {
  id: 'sep1',
  version: 'v5.3',
  title: 'SEP-1 quality measure (severe sepsis and septic shock)',
  source: SOURCE,
  goals: [
    {
      id: 'lactate',
      label: 'Initial lactate within 3 h',
      source: `${SOURCE}: 3-h element`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: { kind: 'first-value-within', keys: ['lactate'], lookbackMinutes: H6, event: 'initial lactate' },
      deadline: { minutes: H3, from: 'time-zero' },
      decision: 'A lactate from 6 h before to 3 h after time zero counts (window from memory, reference file §3b).',
    },
    {
      id: 'cultures-before-antibiotics',
      label: 'Blood cultures drawn before antibiotics, within 3 h',
      source: `${SOURCE}: 3-h element`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: {
        kind: 'mark-before',
        key: 'cultures_drawn',
        beforeKeys: ['antibiotic'],
        lookbackMinutes: H48,
        beforeLookbackMinutes: H24,
        sameTimeCounts: true,
        event: 'blood cultures',
        beforeEvent: 'first antibiotic',
      },
      deadline: { minutes: H3, from: 'time-zero' },
      decision:
        'Cultures count from 48 h before to 3 h after time zero, and must come no later than the first antibiotic (windows from memory, reference file §3b). Cultures charted at the same minute as the antibiotic count as before it. The measure\'s "acceptable delay" exception is not modelled.',
    },
    {
      id: 'antibiotics',
      label: 'Antibiotic within 3 h',
      source: `${SOURCE}: 3-h element`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: { kind: 'first-value-within', keys: ['antibiotic'], lookbackMinutes: H24, event: 'first antibiotic' },
      deadline: { minutes: H3, from: 'time-zero' },
      decision:
        'Clock: 3 h from the severe sepsis presentation time (time zero), separate from the hour-1 clock (reference file §15 #15). An antibiotic from 24 h before time zero on counts (window from memory, reference file §3b); any antibiotic charted counts.',
    },
    {
      id: 'lactate-repeat',
      label: 'Repeat lactate within 6 h when the first was raised',
      source: `${SOURCE}: 6-h element`,
      version: VERSION,
      appliesWhen: 'the first lactate is above 2 mmol/L',
      condition: { kind: 'initial-value', key: 'lactate', op: '>', value: 2, lookbackMinutes: H6 },
      rule: { kind: 'repeat-value-within', key: 'lactate', lookbackMinutes: H6, event: 'repeat lactate' },
      deadline: { minutes: H6, from: 'time-zero' },
      decision:
        'Trigger: first lactate above 2 mmol/L; exactly 2.0 does not call for a repeat (reference file §15 #8; the hour-1 table confirms "> 2").',
    },
    {
      id: 'fluids-30',
      label: '30 mL/kg crystalloid within 3 h of low blood pressure or septic shock',
      source: `${SOURCE}: septic shock 3-h element`,
      version: VERSION,
      appliesWhen: 'initial hypotension, or initial lactate 4 mmol/L or more, or a septic shock time set',
      condition: { kind: 'any', of: [SEP1_INITIAL_HYPOTENSION, SEP1_INITIAL_LACTATE_4, { kind: 'shock-time-set' }] },
      rule: { kind: 'volume-per-kg-within', key: 'fluid_ml', mlPerKg: 30, satisfiedBy: 'completed', lookbackMinutes: H6 },
      deadline: { minutes: H3, from: 'condition' },
      decision:
        'Initial hypotension: two consecutive readings with SBP < 90 or MAP < 65 from 6 h before to 6 h after time zero (window from memory, reference file §3a); an SBP drop > 40 counts only as organ dysfunction for the time-zero suggestion. Met when the crystalloid charted from 6 h before time zero reaches 30 mL/kg of the dosing weight: orders are not charted, so this is stricter than the measure, which asks for the volume to be started within 3 h. Ideal body weight is used only when the worksheet asks for it and BMI > 30; BMI exactly 30 uses actual weight (sources say > 30 and ≥ 30, reference file §15 #18). No 10% volume tolerance (unconfirmed).',
    },
    {
      id: 'vasopressor',
      label: 'Vasopressor within 6 h when low blood pressure persists after fluids',
      source: `${SOURCE}: septic shock 6-h element`,
      version: VERSION,
      appliesWhen: 'two consecutive low readings in the hour after the 30 mL/kg ends',
      condition: SEP1_PERSISTENT_HYPOTENSION,
      rule: { kind: 'first-value-within', keys: VASOPRESSOR_KEYS, op: '>', value: 0, lookbackMinutes: H6, event: 'vasopressor' },
      deadline: { minutes: H6, from: { when: SEP1_SEPTIC_SHOCK, text: 'septic shock presentation' } },
      decision:
        'Persistent hypotension: two consecutive readings with SBP < 90 or MAP < 65 within 1 h after the row where 30 mL/kg was complete (reference file §3b). One low reading only cannot be judged (no data); normal readings mean the goal does not apply. Due 6 h from septic shock presentation (the earliest of initial lactate ≥ 4, persistent hypotension, or the shock time set on the worksheet), never before time zero.',
    },
    {
      id: 'reassessment',
      label: 'Volume status and perfusion reassessed after fluids, within 6 h',
      source: `${SOURCE}: septic shock 6-h element`,
      version: VERSION,
      appliesWhen: 'persistent hypotension after fluids, or initial lactate 4 mmol/L or more, or a septic shock time set',
      condition: SEP1_SEPTIC_SHOCK,
      rule: {
        kind: 'first-value-within',
        keys: ['perfusion_reassessed'],
        lookbackMinutes: H6,
        notBefore: { kind: 'volume-reached', key: 'fluid_ml', mlPerKg: 30, lookbackMinutes: H6 },
        event: 'perfusion reassessment',
      },
      deadline: { minutes: H6, from: 'condition' },
      decision:
        'Counts a "perfusion reassessed" mark charted at or after the row where 30 mL/kg was complete (the measure asks for it after the fluids). Later manual versions accept a clinician attestation; Tidemark does not check what the reassessment contained. Due 6 h from septic shock presentation.',
    },
  ],
};
