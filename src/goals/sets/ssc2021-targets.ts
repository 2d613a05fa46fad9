/**
 * Surviving Sepsis Campaign 2021 adult guideline: resuscitation targets as data.
 * Evans L, Rhodes A, Alhazzani W, et al. Intensive Care Med 2021;47(11):1181–1247,
 * doi:10.1007/s00134-021-06506-y (reference file §1). Superseded by a 2026 guideline whose text is
 * not yet confirmed here (reference file, currency warnings): add it as a new set from data.
 */
import type { GoalSetDef } from '../schema.js';
import { H6, LACTATE_RAISED, ON_VASOPRESSOR } from './common.js';

const SOURCE =
  'Evans L, Rhodes A, Alhazzani W, et al. Surviving Sepsis Campaign: international guidelines for management of sepsis and septic shock 2021. Intensive Care Med 2021;47(11):1181–1247 (reference file §1)';
const VERSION = 'SSC adult guideline 2021';

export const SSC2021_TARGETS: GoalSetDef = {
  id: 'ssc2021-targets',
  version: '2021',
  title: 'Resuscitation targets (Surviving Sepsis Campaign, 2021)',
  source: SOURCE,
  goals: [
    {
      id: 'map',
      label: 'MAP at least 65 mmHg while on a vasopressor',
      source: `${SOURCE}: initial MAP target 65 mmHg in septic shock on vasopressors`,
      version: VERSION,
      appliesWhen: 'a vasopressor is running',
      condition: ON_VASOPRESSOR,
      rule: { kind: 'target', key: 'map', test: { kind: 'range', min: 65 }, from: 'condition' },
      decision:
        'Applies from the first vasopressor charted; MAP exactly 65 is in range. MAP is the measured value, or estimated as DBP + (SBP − DBP)/3 when only SBP and DBP are charted. A standing target without a deadline: out of range is shown as pending.',
    },
    {
      id: 'lactate-falling',
      label: 'Raised lactate falling',
      source: `${SOURCE}: rec. 7 (guide resuscitation to decrease raised lactate)`,
      version: VERSION,
      appliesWhen: 'a lactate above 2 mmol/L',
      condition: LACTATE_RAISED,
      rule: { kind: 'target', key: 'lactate', test: { kind: 'drop-from-first', minDropPct: 10 }, from: 'condition', lookbackMinutes: H6 },
      decision:
        'SSC 2021 gives no figure for "decrease". Tidemark counts a lactate at least 10% below the first raised value (the lactate-clearance goal of Jones 2010, reference file §8); 4.0 → 3.6 is exactly 10% and counts (reference file §15 #19). A single lactate cannot show a trend (no data).',
    },
    {
      id: 'lactate-normal',
      label: 'Raised lactate back to normal',
      source: `${SOURCE}: rec. 7`,
      version: VERSION,
      appliesWhen: 'a lactate above 2 mmol/L',
      condition: LACTATE_RAISED,
      rule: { kind: 'target', key: 'lactate', test: { kind: 'range', max: 2 }, from: 'condition', lookbackMinutes: H6 },
      decision:
        'Normal means 2.0 mmol/L or less, the complement of the "above 2" threshold used by the hour-1 bundle, SEP-1 and Sepsis-3 (reference file §2, §3, §5); Jones 2010 counted < 2 as at goal (reference file §8).',
    },
    {
      id: 'crt',
      label: 'Capillary refill 3 s or less in septic shock',
      source: `${SOURCE}: rec. 8 (capillary refill time as an adjunct in septic shock); target from Hernández G et al., ANDROMEDA-SHOCK, JAMA 2019;321(7):654–664 (reference file §9)`,
      version: VERSION,
      appliesWhen: 'septic shock: a vasopressor running with lactate above 2, or a septic shock time set',
      condition: { kind: 'any', of: [{ kind: 'shock-time-set' }, { kind: 'all', of: [ON_VASOPRESSOR, LACTATE_RAISED] }] },
      rule: { kind: 'target', key: 'crt', test: { kind: 'range', max: 3 }, from: 'condition' },
      decision:
        'SSC 2021 suggests capillary refill time to guide resuscitation in septic shock without a figure; the ≤ 3 s target (3.0 s is in range) comes from ANDROMEDA-SHOCK. Septic shock here: a vasopressor running and a lactate above 2 (Sepsis-3, reference file §5), or a shock time set on the worksheet.',
    },
    {
      id: 'urine-output',
      label: 'Urine output at least 0.5 mL/kg/h',
      source: `${SOURCE}; the 0.5 mL/kg/h figure is from Rivers E et al., N Engl J Med 2001;345:1368–1377, as adopted by the 2008 SSC protocol (reference file §4, §13)`,
      version: VERSION,
      appliesWhen: 'always',
      condition: { kind: 'always' },
      rule: { kind: 'target', key: 'uo_ml_kg_h', test: { kind: 'range', min: 0.5 }, from: 'time-zero', valueCovers: 'since-previous-row' },
      decision:
        'SSC 2021 sets no urine-output figure; Tidemark uses ≥ 0.5 mL/kg/h from the EGDT protocol. The rate is the urine charted in a row over the time since the previous row, per kg of actual body weight. A standing target without a deadline.',
    },
  ],
};
