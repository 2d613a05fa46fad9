// Trend model (pure): series, bands from the goal-set data, verdicts, markers, scales and text.
// Invented, fictional values only.
import { describe, expect, it } from 'vitest';
import {
  assignLanes,
  buildTrends,
  minutesLabel,
  niceTicks,
  passes,
  timeStep,
  trendNoteLines,
  type TrendModel,
  type TrendSeries,
} from '../../src/app/trend-model.js';
import { evaluate } from '../../src/goals/engine.js';
import { GoalRegistry } from '../../src/goals/registry.js';
import { EGDT } from '../../src/goals/sets/egdt.js';
import { deriveAll } from '../../src/sheet/derived.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { MIN, T0, worksheet, type RowInput } from '../sheet/sheet-fixture.js';

const ALL_SETS = ['ssc-hour1', 'sep1', 'ssc2021-targets', 'egdt'];

/**
 * Rows (minutes from T0; time zero at T0; 80 kg):
 * r0 −20: SBP 88 / DBP 50, lactate 4.0, cultures
 * r1 15: MAP 60, crystalloid 1000 mL, antibiotic
 * r2 45: SBP 90 / DBP 60 (MAP estimate 70), crystalloid 1000 mL, five vasopressors
 * r3 405 (6 h after r2): MAP 65, lactate 3.6, ScvO₂ 68, urine 200 mL
 * r4 420: MAP 95, lactate 1.8, ScvO₂ 72, urine 40 mL (15 min)
 */
const ROWS: RowInput[] = [
  { min: -20, cells: { sbp: 88, dbp: 50, lactate: 4.0, cultures_drawn: true } },
  { min: 15, cells: { map: 60, fluid_ml: 1000, antibiotic: 'ceftriaxone' } },
  {
    min: 45,
    cells: { sbp: 90, dbp: 60, fluid_ml: 1000, norepinephrine: 0.1, epinephrine: 0.05, phenylephrine: 1.0, dopamine: 5, vasopressin: 0.03 },
  },
  { min: 405, cells: { map: 65, lactate: 3.6, scvo2: 68, uo_ml: 200 } },
  { min: 420, cells: { map: 95, lactate: 1.8, scvo2: 72, uo_ml: 40 } },
];
const NOW = T0 + 430 * MIN;

function sheet(sets: string[] = ALL_SETS, rows: RowInput[] = ROWS, timeZeroMin: number | null = 0): Worksheet {
  const ws = worksheet({ rows, weightKg: 80, ...(timeZeroMin === null ? {} : { timeZeroMin }) });
  return { ...ws, goalSets: sets };
}

function trends(ws: Worksheet, now = NOW, registry?: GoalRegistry): TrendModel {
  const goals = evaluate(ws, ws.goalSets, now, registry ? { registry } : {});
  return buildTrends(ws, deriveAll(ws).rows, goals, now, registry ? { registry } : {});
}

function series(m: TrendModel, key: string): TrendSeries {
  const s = m.series.find((x) => x.key === key);
  if (!s) throw new Error(`no series ${key}`);
  return s;
}

describe('trend series', () => {
  const m = trends(sheet());

  it('has the five measures in panel order', () => {
    expect(m.series.map((s) => s.key)).toEqual(['map', 'lactate', 'scvo2', 'uo_ml_kg_h', 'ne_equivalent']);
  });

  it('plots MAP measured where charted and estimated from SBP and DBP otherwise, at the rows’ times', () => {
    const s = series(m, 'map');
    expect(s.points.map((p) => p.rowId)).toEqual(['r0', 'r1', 'r2', 'r3', 'r4']);
    expect(s.points.map((p) => p.minutes)).toEqual([-20, 15, 45, 405, 420]);
    // MAP estimate DBP + (SBP − DBP)/3: 90/60 → 70.0 (reference file §16, derived); 88/50 → 62.67.
    expect(s.points[2]!.value).toBeCloseTo(70, 9);
    expect(s.points[0]!.value).toBeCloseTo(50 + 38 / 3, 9);
    expect(s.points[1]!.value).toBe(60);
    expect(s.unit).toBe('mmHg');
  });

  it('plots urine output as mL/kg/h over the interval since the previous row', () => {
    const s = series(m, 'uo_ml_kg_h');
    // 200 mL over 6 h at 80 kg = 0.417 mL/kg/h (reference file §16, derived).
    expect(s.points[0]!.value).toBeCloseTo(0.4167, 4);
    expect(s.points[0]!.minutes).toBe(405);
    expect(s.points[0]!.fromMinutes).toBe(45);
    // 40 mL over 15 min at 80 kg = 2.0 mL/kg/h (rate formula, reference file §13).
    expect(s.points[1]!.value).toBeCloseTo(2.0, 9);
  });

  it('plots the norepinephrine-equivalent dose of the row', () => {
    const s = series(m, 'ne_equivalent');
    // NE 0.1 + epi 0.05 + phenylephrine 1.0/10 + dopamine 5/100 + vasopressin 0.03 × 2.5 = 0.375
    // (reference file §16 vector, without its angiotensin II term, which Tidemark does not chart).
    expect(s.points).toHaveLength(1);
    expect(s.points[0]!.value).toBeCloseTo(0.375, 9);
    expect(s.points[0]!.verdict).toBe('none');
    expect(s.bands).toEqual([]);
  });
});

describe('target bands come from the goal-set data', () => {
  const m = trends(sheet());

  it('MAP: ≥ 65 (SSC 2021) from the first vasopressor, 65–90 (EGDT) from time zero', () => {
    const s = series(m, 'map');
    // SSC 2021: initial MAP target 65 mmHg on vasopressors (reference file §1);
    // EGDT: MAP 65–90 mmHg (Rivers 2001, reference file §4).
    const ssc = s.bands.find((b) => b.sets.includes('SSC 2021'))!;
    const egdt = s.bands.find((b) => b.sets.includes('EGDT'))!;
    expect([ssc.min, ssc.max, ssc.fromMinutes]).toEqual([65, null, 45]);
    expect([egdt.min, egdt.max, egdt.fromMinutes]).toEqual([65, 90, 0]);
    expect(ssc.goalIds).toEqual(['ssc2021-targets.map']);
    expect(ssc.shortText).toBe('target ≥ 65');
    expect(egdt.label).toContain('target 65–90 mmHg (EGDT)');
  });

  it('ScvO₂ ≥ 70 % (EGDT) and urine ≥ 0.5 mL/kg/h (SSC 2021 and EGDT merged into one band)', () => {
    // ScvO₂ ≥ 70 %, urine ≥ 0.5 mL/kg/h (Rivers 2001, reference file §4).
    const scv = series(m, 'scvo2').bands;
    expect(scv.map((b) => [b.min, b.max])).toEqual([[70, null]]);
    const uo = series(m, 'uo_ml_kg_h').bands;
    expect(uo).toHaveLength(1);
    expect([uo[0]!.min, uo[0]!.max]).toEqual([0.5, null]);
    expect(uo[0]!.sets).toEqual(['SSC 2021', 'EGDT']);
    expect(uo[0]!.goalIds).toEqual(['ssc2021-targets.urine-output', 'egdt.urine-output']);
  });

  it('lactate: normal ≤ 2 and a fall of at least 10 % from the first raised value', () => {
    const s = series(m, 'lactate');
    const normal = s.bands.find((b) => b.kind === 'range')!;
    const drop = s.bands.find((b) => b.kind === 'drop')!;
    // "above 2 mmol/L" threshold (reference file §2, §3); Jones 2010 10% clearance (reference file §8).
    expect([normal.min, normal.max]).toEqual([null, 2]);
    expect(drop.dropPct).toBe(10);
    expect(drop.reference).toEqual({ value: 4, rowId: 'r0', minutes: -20 });
    expect(drop.max).toBeCloseTo(3.6, 9);
    // Both count from the first lactate above 2 (their condition), at −20 min.
    expect(normal.fromMinutes).toBe(-20);
  });

  it('follows the data: a set registered with other figures draws other bands', () => {
    const reg = new GoalRegistry([
      {
        ...EGDT,
        goals: EGDT.goals.map((g) =>
          g.id === 'map' ? { ...g, rule: { ...g.rule, test: { kind: 'range' as const, min: 70, max: 80 } } } : g,
        ),
      },
    ]);
    const m2 = trends(sheet(['egdt']), NOW, reg);
    const b = series(m2, 'map').bands;
    expect(b.map((x) => [x.min, x.max])).toEqual([[70, 80]]);
    // The point at 70 is now on the boundary (in); 95 is above 80.
    expect(series(m2, 'map').points.map((p) => p.verdict)).toEqual(['none', 'below', 'in', 'below', 'above']);
  });

  it('draws no band for a goal that does not apply, and says why', () => {
    const noPressor = ROWS.map((r) => ({
      ...r,
      cells: Object.fromEntries(
        Object.entries(r.cells ?? {}).filter(
          ([k]) => !['norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'vasopressin'].includes(k),
        ),
      ),
    }));
    const m2 = trends(sheet(['ssc2021-targets'], noPressor));
    const s = series(m2, 'map');
    expect(s.bands).toEqual([]);
    expect(s.inactive).toHaveLength(1);
    expect(s.inactive[0]!.why).toContain('does not apply');
    expect(s.summary).toContain('SSC 2021 target ≥ 65 mmHg does not apply now');
    expect(s.points.every((p) => p.verdict === 'none')).toBe(true);
  });

  it('draws no band when no set in force has a target for the measure', () => {
    const m2 = trends(sheet(['ssc-hour1', 'sep1']));
    for (const s of m2.series) expect(s.bands).toEqual([]);
    expect(series(m2, 'scvo2').summary).toContain('No target band');
  });
});

describe('point verdicts against the bands in force at the point’s time', () => {
  const m = trends(sheet());

  it('MAP: before any band none; 60 below; 70 and 65 (boundary) in; 95 above the EGDT 90', () => {
    // MAP exactly 65 is in range (SSC 2021 "65 mmHg" target; EGDT 65–90 inclusive, reference file §1, §4).
    const s = series(m, 'map');
    expect(s.points.map((p) => p.verdict)).toEqual(['none', 'below', 'in', 'in', 'above']);
    expect(s.points[4]!.failed).toEqual(['65–90 mmHg (EGDT)']);
    expect(s.points[1]!.judgedBy).toBe(1);
    expect(s.points[2]!.judgedBy).toBe(2);
  });

  it('lactate 4.0 → 3.6 is exactly a 10 % fall (in) but still above 2; 1.8 is in both', () => {
    // (4.0 − 3.6)/4.0 = 10 % counts despite IEEE-754 giving 9.999… (reference file §15 #19).
    const s = series(m, 'lactate');
    const drop = s.bands.find((b) => b.kind === 'drop')!;
    expect(passes(drop, 3.6)).toBe('in');
    expect(passes(drop, 3.61)).toBe('above');
    expect(s.points.map((p) => p.verdict)).toEqual(['above', 'above', 'in']);
    expect(s.points[1]!.failed).toEqual(['≤ 2 mmol/L (SSC 2021)']);
  });

  it('ScvO₂ 68 below and 72 in; urine 0.42 below and 2.0 in', () => {
    expect(series(m, 'scvo2').points.map((p) => p.verdict)).toEqual(['below', 'in']);
    expect(series(m, 'uo_ml_kg_h').points.map((p) => p.verdict)).toEqual(['below', 'in']);
  });

  it('agrees with the goal engine on the latest value of each target goal', () => {
    const ws = sheet();
    const goals = evaluate(ws, ws.goalSets, NOW);
    for (const g of goals) {
      if (!g.target || g.target.latestValue === null || g.target.inRangeNow === null || g.status === 'no-data') continue;
      const s = m.series.find((x) => x.key === g.target!.key);
      if (!s) continue;
      const band = s.bands.find((b) => b.goalIds.includes(g.id))!;
      expect(passes(band, g.target.latestValue) === 'in', g.id).toBe(g.target.inRangeNow);
    }
  });
});

describe('markers', () => {
  const ws = sheet();
  const m = trends(ws);

  it('marks time zero at 0 and now', () => {
    expect(m.markers.find((x) => x.kind === 'time-zero')!.minutes).toBe(0);
    expect(m.markers.find((x) => x.kind === 'now')!.minutes).toBe(430);
  });

  it('marks each goal deadline once, goals due at the same minute together', () => {
    const goals = evaluate(ws, ws.goalSets, NOW).filter((g) => g.deadline);
    const deadlines = m.markers.filter((x) => x.kind === 'deadline');
    for (const g of goals) {
      const hits = deadlines.filter((d) => d.goals.some((x) => x.id === g.id));
      expect(hits, g.id).toHaveLength(1);
      expect(hits[0]!.minutes).toBe((Date.parse(g.deadline!) - T0) / MIN);
    }
    expect(new Set(deadlines.map((d) => d.minutes)).size).toBe(deadlines.length);
    // Hour-1 bundle antibiotics due 60 min after time zero (reference file §2);
    // SEP-1 antibiotics due 3 h after presentation (reference file §3b); EGDT goals within 6 h (§4).
    expect(deadlines.find((d) => d.minutes === 60)!.goals.map((g) => g.id)).toContain('ssc-hour1.antibiotics');
    expect(deadlines.find((d) => d.minutes === 180)!.goals.map((g) => g.id)).toContain('sep1.antibiotics');
    expect(deadlines.find((d) => d.minutes === 360)!.goals.map((g) => g.id)).toContain('egdt.scvo2');
    expect(deadlines.find((d) => d.minutes === 60)!.short).toBe('due 1 h');
  });

  it('marks crystalloid, the antibiotic and cultures at their rows', () => {
    const ev = m.markers
      .filter((x) => ['fluid', 'antibiotic', 'cultures'].includes(x.kind))
      .map((x) => [x.kind, x.rowId, x.minutes, x.symbol, x.short]);
    expect(ev).toEqual([
      ['cultures', 'r0', -20, 'C', 'cultures'],
      ['fluid', 'r1', 15, '◆', '1000 mL'],
      ['antibiotic', 'r1', 15, 'A', 'ceftriaxone'],
      ['fluid', 'r2', 45, '◆', '1000 mL'],
    ]);
  });
});

describe('axes', () => {
  it('the time axis covers the rows and now, with ticks on whole steps inside it', () => {
    const m = trends(sheet());
    expect(m.xMin).toBeLessThanOrEqual(-20);
    expect(m.xMax).toBeGreaterThanOrEqual(430);
    const step = m.xTicks[1]! - m.xTicks[0]!;
    expect(step).toBe(120);
    expect(m.xTicks.every((t) => t % step === 0 && t >= m.xMin && t <= m.xMax)).toBe(true);
    expect(m.xTicks[0]! - step).toBeLessThan(m.xMin);
    expect(m.xTicks[m.xTicks.length - 1]! + step).toBeGreaterThan(m.xMax);
  });

  it('deadlines in the hour ahead widen the axis; later ones are listed apart', () => {
    // At 30 min: hour-1 deadlines (60 min, reference file §2) are ahead within the hour and are
    // drawn; SEP-1 3 h and EGDT 6 h deadlines (reference file §3b, §4) are listed as later.
    const m = trends(sheet(ALL_SETS, ROWS.slice(0, 2)), T0 + 30 * MIN);
    expect(m.xMax).toBeGreaterThanOrEqual(60);
    expect(m.xMax).toBeLessThan(180);
    expect(m.laterDeadlines.map((d) => d.minutes)).toEqual(
      m.markers.filter((d) => d.kind === 'deadline' && d.minutes > m.xMax).map((d) => d.minutes),
    );
    expect(m.laterDeadlines.some((d) => d.minutes === 180)).toBe(true);
    expect(m.laterDeadlines.some((d) => d.minutes === 60)).toBe(false);
    // Only the hour after what is charted (15 min) or now (30 min): no chaining from deadline to deadline.
    const drawn = m.markers.filter((d) => d.kind === 'deadline' && !m.laterDeadlines.includes(d));
    expect(Math.max(...drawn.map((d) => d.minutes))).toBeLessThanOrEqual(60 + 60);
    // At 130 min the SEP-1 3 h deadline (180) is within the hour ahead; the hour-1 repeat lactate
    // (4 h, 240: reference file §2) is not, even though it is within an hour of 180.
    const later = trends(sheet(ALL_SETS, ROWS.slice(0, 2)), T0 + 130 * MIN);
    expect(later.xMax).toBeGreaterThanOrEqual(180);
    expect(later.xMax).toBeLessThan(240);
    expect(later.laterDeadlines.map((d) => d.minutes)).toContain(240);
  });

  it('each value axis holds its points and band edges; ScvO₂ stops at 100 %', () => {
    const m = trends(sheet());
    for (const s of m.series) {
      for (const p of s.points) expect(p.value >= s.yMin && p.value <= s.yMax, s.key).toBe(true);
      for (const b of s.bands) {
        if (b.min !== null) expect(b.min >= s.yMin && b.min <= s.yMax).toBe(true);
        if (b.max !== null) expect(b.max >= s.yMin && b.max <= s.yMax).toBe(true);
      }
    }
    expect(series(m, 'scvo2').yMax).toBeLessThanOrEqual(100);
    expect(series(m, 'lactate').yMin).toBe(0);
  });

  it('nice ticks and steps (common practice, no source)', () => {
    expect(niceTicks(58, 97, 4)).toEqual({ min: 50, max: 100, ticks: [50, 60, 70, 80, 90, 100] });
    expect(niceTicks(0, 0.43, 4).ticks).toEqual([0, 0.2, 0.4, 0.6]);
    expect(timeStep(200)).toBe(60);
    expect(timeStep(80)).toBe(15);
    expect(minutesLabel(90)).toBe('1 h 30');
    expect(minutesLabel(-30)).toBe('−30 min');
    expect(minutesLabel(120)).toBe('2 h');
  });

  it('labels close together go to separate lanes', () => {
    expect(assignLanes([0, 10, 100, 105], 40)).toEqual([0, 1, 0, 1]);
    expect(assignLanes([100, 0], 40)).toEqual([0, 0]);
  });
});

describe('text alternatives', () => {
  const m = trends(sheet());

  it('a sentence per series with the count, first and latest, targets and how many are out', () => {
    const s = series(m, 'map');
    expect(s.summary).toContain(
      'MAP: 5 values, from 63 mmHg at 07:40, 20 min before time zero to 95 mmHg at 15:00, 7 h 0 min after time zero',
    );
    expect(s.summary).toContain('the latest value is above target');
    expect(s.summary).toContain('2 of 4 values judged are out of range');
  });

  it('plain note lines with values, out-of-range marks and targets', () => {
    const lines = trendNoteLines(m);
    expect(lines[0]).toBe('Trends since time zero:');
    expect(lines).toContain(
      '- Lactate mmol/L: 4 (out) at −20 min, 3.6 (out) at 6 h 45, 1.8 at 7 h; target ≥ 10% below the first value (≤ 3.6 mmol/L) (SSC 2021); ≤ 2 mmol/L (SSC 2021)',
    );
    expect(lines).toHaveLength(1 + 5);
    // Rows after the summary moment are left out, as the goal engine does.
    const early = trendNoteLines(trends(sheet(), T0 + 50 * MIN));
    expect(early.find((l) => l.startsWith('- MAP'))).toBe(
      '- MAP mmHg: 63 at −20 min, 60 (out) at 15 min, 70 at 45 min; target ≥ 65 mmHg (SSC 2021); 65–90 mmHg (EGDT)',
    );
  });

  it('without time zero, times count from the first row and condition bands wait', () => {
    const m2 = trends(sheet(ALL_SETS, ROWS, null));
    expect(m2.hasTimeZero).toBe(false);
    expect(m2.originMs).toBe(T0 - 20 * MIN);
    expect(series(m2, 'map').points[0]!.minutes).toBe(0);
    expect(m2.markers.some((x) => x.kind === 'time-zero' || x.kind === 'deadline')).toBe(false);
    expect(trendNoteLines(m2)[0]).toContain('time zero not set');
  });
});
