/**
 * Surviving Sepsis Campaign hour-1 bundle (2018 update) as data.
 * Levy MM, Evans LE, Rhodes A. Intensive Care Med 2018;44(6):925–928, doi:10.1007/s00134-018-5085-0
 * (reference file §2).
 */
import type { GoalSetDef } from '../schema.js';
import { H1, H24, H4, H48, H6, VASOPRESSOR_KEYS } from './common.js';

const SOURCE =
  'Levy MM, Evans LE, Rhodes A. The Surviving Sepsis Campaign Bundle: 2018 update. Intensive Care Med 2018;44(6):925–928 (reference file §2, Table 1)';
const VERSION = 'Hour-1 bundle, 2018';

export const SSC_HOUR1: GoalSetDef = {
  id: 'ssc-hour1',
  version: '2018',
  title: 'Hour-1 bundle (Surviving Sepsis Campaign, 2018)',
  source: SOURCE,
  goals: [
    {
      id: 'lactate',
      label: 'Lactate measured in the first hour',
      source: `${SOURCE}: element 1`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: { kind: 'first-value-within', keys: ['lactate'], lookbackMinutes: H6, event: 'first lactate' },
      deadline: { minutes: H1, from: 'time-zero' },
      decision:
        'Due 60 min after time zero. A lactate charted up to 6 h before time zero also counts: the bundle sets no look-back, so Tidemark borrows the SEP-1 initial-lactate window (reference file §3b, from memory).',
    },
    {
      id: 'lactate-repeat',
      label: 'Lactate measured again when the first was raised',
      source: `${SOURCE}: element 1 ("re-measure if initial lactate > 2 mmol/L")`,
      version: VERSION,
      appliesWhen: 'the first lactate is above 2 mmol/L',
      condition: { kind: 'initial-value', key: 'lactate', op: '>', value: 2, lookbackMinutes: H6 },
      rule: { kind: 'repeat-value-within', key: 'lactate', lookbackMinutes: H6, event: 'repeat lactate' },
      deadline: { minutes: H4, from: 'condition' },
      decision:
        'Trigger: first lactate above 2 mmol/L; exactly 2.0 does not call for a repeat (reference file §15 #8). Due 4 h after the first lactate: the bundle text says within 2–4 h (reference file §2, from memory), and Tidemark uses the outer bound; any later lactate counts as the repeat.',
    },
    {
      id: 'cultures-before-antibiotics',
      label: 'Blood cultures drawn before the first antibiotic',
      source: `${SOURCE}: element 2`,
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
      deadline: { minutes: H1, from: 'time-zero' },
      decision:
        'Cultures must be charted within 60 min of time zero and no later than the first antibiotic. Cultures charted at the same minute as the antibiotic count as before it (chart times have minute resolution). Marks before time zero count within the SEP-1 look-backs (cultures 48 h, antibiotic 24 h; reference file §3b, from memory).',
    },
    {
      id: 'antibiotics',
      label: 'Antibiotic given in the first hour',
      source: `${SOURCE}: element 3`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: { kind: 'first-value-within', keys: ['antibiotic'], lookbackMinutes: H24, event: 'first antibiotic' },
      deadline: { minutes: H1, from: 'time-zero' },
      decision:
        'Clock: 60 min from time zero (triage), as the hour-1 bundle sets it. SEP-1 (3 h from severe sepsis presentation) and SSC 2021 (1 h or 3 h from recognition) keep their own clocks (reference file §15 #15). Tidemark cannot tell whether a drug is broad-spectrum: any antibiotic charted counts.',
    },
    {
      id: 'fluids-30',
      label: 'Rapid 30 mL/kg crystalloid started for low blood pressure or lactate ≥ 4',
      source: `${SOURCE}: element 4`,
      version: VERSION,
      appliesWhen: 'a low blood pressure reading, or a lactate of 4 mmol/L or more',
      condition: {
        kind: 'any',
        of: [
          { kind: 'hypotension', sbpBelow: 90, mapBelow: 65, consecutive: 1, lookbackMinutes: H6 },
          { kind: 'any-value', keys: ['lactate'], op: '>=', value: 4, lookbackMinutes: H6 },
        ],
      },
      rule: { kind: 'volume-per-kg-within', key: 'fluid_ml', mlPerKg: 30, satisfiedBy: 'started', lookbackMinutes: H6 },
      deadline: { minutes: H1, from: 'condition' },
      decision:
        'The bundle asks to begin 30 mL/kg within the hour: met when the first crystalloid is charted; the volume given against 30 mL/kg of the dosing weight is shown. Low blood pressure: one reading with SBP < 90 or MAP < 65 (the bundle gives no figure; SEP-1 thresholds, reference file §3a). Lactate exactly 4.0 counts. Due 60 min after time zero, or after the first low reading or lactate ≥ 4 when that comes later.',
    },
    {
      id: 'vasopressor',
      label: 'Vasopressor started when MAP stays below 65 during or after fluids',
      source: `${SOURCE}: element 5`,
      version: VERSION,
      appliesWhen: 'MAP below 65 mmHg at or after the first crystalloid',
      condition: {
        kind: 'hypotension',
        mapBelow: 65,
        consecutive: 1,
        lookbackMinutes: H6,
        after: { kind: 'any-value', keys: ['fluid_ml'], op: '>', value: 0, lookbackMinutes: H6 },
      },
      rule: { kind: 'first-value-within', keys: VASOPRESSOR_KEYS, op: '>', value: 0, lookbackMinutes: H6, event: 'vasopressor' },
      deadline: { minutes: H1, from: 'condition' },
      decision:
        'Applies when a MAP below 65 mmHg (measured, or estimated from SBP and DBP) is charted at or after the first crystalloid row; MAP exactly 65 does not count as low. Due 60 min after that reading or after time zero, whichever is later (the bundle sets one hour for every element).',
    },
  ],
};
