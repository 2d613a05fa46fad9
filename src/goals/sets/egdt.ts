/**
 * Early goal-directed therapy (Rivers et al. 2001) targets as data.
 * Rivers E, Nguyen B, Havstad S, et al. N Engl J Med 2001;345(19):1368–1377,
 * doi:10.1056/NEJMoa010307 (reference file §4).
 */
import type { GoalDef, GoalSetDef, TargetTest } from '../schema.js';
import { H6 } from './common.js';

const SOURCE =
  'Rivers E, Nguyen B, Havstad S, et al. Early goal-directed therapy in the treatment of severe sepsis and septic shock. N Engl J Med 2001;345(19):1368–1377 (reference file §4)';
const VERSION = 'EGDT protocol, 2001';
const SIX_HOURS =
  'The protocol ran for the first 6 h: the target must first be reached within 6 h of time zero (a later first reach stays missed). Tidemark applies it whenever the set is switched on; it does not check the trial inclusion criteria.';

function target(id: string, label: string, key: string, test: TargetTest, extra: string, valueCovers?: 'since-previous-row'): GoalDef {
  return {
    id,
    label,
    source: SOURCE,
    version: VERSION,
    appliesWhen: 'always',
    condition: { kind: 'always' },
    rule: { kind: 'target', key, test, from: 'time-zero', ...(valueCovers ? { valueCovers } : {}) },
    deadline: { minutes: H6, from: 'time-zero' },
    decision: `${extra} ${SIX_HOURS}`,
  };
}

export const EGDT: GoalSetDef = {
  id: 'egdt',
  version: '2001',
  title: 'Early goal-directed therapy (Rivers, 2001)',
  source: SOURCE,
  goals: [
    target(
      'cvp',
      'CVP 8–12 mmHg',
      'cvp',
      { kind: 'range', min: 8, max: 12 },
      'CVP in mmHg (cmH₂O is converted at entry); 8 and 12 are in range.',
    ),
    target(
      'map',
      'MAP 65–90 mmHg',
      'map',
      { kind: 'range', min: 65, max: 90 },
      'MAP measured, or estimated from SBP and DBP; 65 and 90 are in range.',
    ),
    target('scvo2', 'ScvO₂ at least 70%', 'scvo2', { kind: 'range', min: 70 }, 'ScvO₂ exactly 70% is in range.'),
    target(
      'urine-output',
      'Urine output at least 0.5 mL/kg/h',
      'uo_ml_kg_h',
      { kind: 'range', min: 0.5 },
      'Urine rate over the interval since the previous row, per kg of actual body weight.',
      'since-previous-row',
    ),
    {
      ...target(
        'hct',
        'Hematocrit at least 30% when ScvO₂ is low',
        'hct',
        { kind: 'range', min: 30 },
        'Applies once an ScvO₂ below 70% is charted (the protocol transfuses to Hct ≥ 30% when ScvO₂ stays below 70% after the CVP and MAP goals; Tidemark does not check that order). Hct exactly 30% is in range.',
      ),
      appliesWhen: 'an ScvO₂ below 70% is charted',
      condition: { kind: 'any-value', keys: ['scvo2'], op: '<', value: 70 },
    },
  ],
};
