// SOFA, qSOFA and SIRS at every cut-off, against Sepsis-3 Table 1 (Singer et al., JAMA 2016,
// PMC4968574 table T1, adapted from Vincent et al. 1996), Sepsis-3 qSOFA and Bone et al. 1992 /
// SEP-1 SIRS, as restated in reference/clinical-check-values.md §5–§7 and §15.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { deriveAll } from '../../src/sheet/derived.js';
import { parseCellInput } from '../../src/sheet/parse.js';
import {
  sofaCardiovascular,
  sofaCns,
  sofaCoagulation,
  sofaLiver,
  sofaRenalCreatinine,
  sofaRenalUrine,
  sofaRespiration,
  makeScoreInput,
  scanWindow,
  WindowScanner,
  type ScoreOptions,
} from '../../src/sheet/scores.js';
import { worksheet, type RowInput } from './sheet-fixture.js';

function canonical(key: string, text: string): number {
  const r = parseCellInput(key, text);
  if (!r.ok || !r.cell) throw new Error(`cannot parse ${key} ${text}`);
  return r.cell.value as number;
}

/** Scores at the last row of a worksheet built from rows. */
function scoresOf(rows: RowInput[], options: ScoreOptions = {}, extra: { weightKg?: number } = {}) {
  const d = deriveAll(worksheet({ rows, ...extra }), options);
  return d.rows[d.rows.length - 1]!.scores;
}

describe('SOFA respiration, P/F mmHg (Sepsis-3 Table 1)', () => {
  it.each([
    [450, 0],
    [400, 0],
    [399.9, 1],
    [300, 1],
    [299.9, 2],
    [200, 2],
  ])('P/F %s → %s', (pf, pts) => {
    expect(sofaRespiration(pf).points).toBe(pts);
    expect(sofaRespiration(pf).supportUnknown).toBe(false);
  });

  it.each([
    [199.9, 3],
    [100, 3],
    [99.9, 4],
    [50, 4],
  ])('P/F %s with respiratory support → %s', (pf, pts) => {
    expect(sofaRespiration(pf, true)).toEqual({ points: pts, supportUnknown: false });
  });

  it('P/F < 200 without known support caps at 2 and says support is unknown (common interpretation, reference §6)', () => {
    expect(sofaRespiration(150)).toEqual({ points: 2, supportUnknown: true });
    expect(sofaRespiration(80)).toEqual({ points: 2, supportUnknown: true });
    expect(sofaRespiration(80, false)).toEqual({ points: 2, supportUnknown: false });
  });

  it('in a worksheet, P/F < 200 lists respiratory_support as missing', () => {
    const s = scoresOf([{ min: 0, cells: { pao2: 60, fio2: 0.5 } }]).sofa;
    expect(s.parts.respiration).toBe(2);
    expect(s.missing).toContain('respiratory_support');
    expect(s.notes.join(' ')).toMatch(/respiratory support/);
    const sup = scoresOf([{ min: 0, cells: { pao2: 60, fio2: 0.5 } }], { respiratorySupport: true }).sofa;
    expect(sup.parts.respiration).toBe(3);
    expect(sup.missing).not.toContain('respiratory_support');
  });

  it('kPa cut-offs 53.3 / 40 / 26.7 / 13.3 land on the mmHg bands (reference §6)', () => {
    const pf = (kpa: string) => canonical('pao2', kpa) / 1; // FiO2 1.0
    expect(sofaRespiration(pf('53.4 kPa')).points).toBe(0);
    expect(sofaRespiration(pf('53.2 kPa')).points).toBe(1);
    expect(sofaRespiration(pf('39.9 kPa')).points).toBe(2);
  });
});

describe('SOFA coagulation, platelets ×10³/µL (Sepsis-3 Table 1)', () => {
  it.each([
    [150, 0],
    [149, 1],
    [100, 1],
    [99, 2],
    [50, 2],
    [49, 3],
    [20, 3],
    [19, 4],
  ])('platelets %s → %s', (p, pts) => expect(sofaCoagulation(p)).toBe(pts));
});

describe('SOFA liver, bilirubin mg/dL (Sepsis-3 Table 1; half-open bands, §15 #3)', () => {
  it.each([
    [1.19, 0],
    [1.2, 1],
    [1.95, 1],
    [1.99, 1],
    [2.0, 2],
    [5.9, 2],
    [5.95, 2],
    [6.0, 3],
    [11.9, 3],
    [11.95, 3],
    [12.0, 4],
    [20, 4],
  ])('bilirubin %s → %s', (b, pts) => expect(sofaLiver(b)).toBe(pts));

  // µmol/L values between the table's rounded set (20/33/102/204) and the exact one
  // (20.5/34.2/102.6/205.2, reference §15 #2): Tidemark converts with 17.1 and scores on mg/dL.
  it.each([
    ['20.3 umol/L', 0], // rounded table would say 1
    ['20.6 umol/L', 1],
    ['33 umol/L', 1], // rounded table would say 2
    ['34.3 umol/L', 2],
    ['102 umol/L', 2], // rounded table would say 3
    ['102.7 umol/L', 3],
    ['205 umol/L', 3], // rounded table (> 204) would say 4
    ['205.2 umol/L', 4],
  ])('bilirubin %s → %s', (text, pts) => expect(sofaLiver(canonical('bilirubin', text))).toBe(pts));
});

describe('SOFA CNS, GCS (Sepsis-3 Table 1)', () => {
  it.each([
    [15, 0],
    [14, 1],
    [13, 1],
    [12, 2],
    [10, 2],
    [9, 3],
    [6, 3],
    [5, 4],
    [3, 4],
  ])('GCS %s → %s', (g, pts) => expect(sofaCns(g)).toBe(pts));
});

describe('SOFA renal (Sepsis-3 Table 1; half-open bands, §15 #3)', () => {
  it.each([
    [1.19, 0],
    [1.2, 1],
    [1.99, 1],
    [2.0, 2],
    [3.49, 2],
    [3.5, 3],
    [4.99, 3],
    [5.0, 4],
    [8, 4],
  ])('creatinine %s mg/dL → %s', (c, pts) => expect(sofaRenalCreatinine(c)).toBe(pts));

  // Between the rounded µmol/L set (110/171/300/440) and the exact one (106.1/176.8/309.4/442.0), §15 #2.
  it.each([
    ['106 umol/L', 0],
    ['108 umol/L', 1], // rounded table (< 110) would say 0
    ['172 umol/L', 1], // rounded table (171–299) would say 2
    ['176.9 umol/L', 2],
    ['305 umol/L', 2], // rounded table (300–440) would say 3
    ['309.5 umol/L', 3],
    ['441 umol/L', 3], // rounded table (> 440) would say 4
    ['442 umol/L', 4],
  ])('creatinine %s → %s', (text, pts) => expect(sofaRenalCreatinine(canonical('creatinine', text))).toBe(pts));

  it.each([
    [800, 0],
    [500, 0],
    [499, 3],
    [200, 3],
    [199, 4],
    [0, 4],
  ])('urine %s mL/day → %s', (u, pts) => expect(sofaRenalUrine(u)).toBe(pts));
});

describe('SOFA cardiovascular (Sepsis-3 Table 1; dopamine 5.0 decided by Vincent 1996, §15 #1)', () => {
  it.each([
    [{ map: 70 }, 0],
    [{ map: 69.9 }, 1],
    [{ map: 80, dopamine: 4.9 }, 2],
    [{ map: 80, dopamine: 5.0 }, 2], // the Sepsis-3 gap: Tidemark follows Vincent 1996 "≤ 5 → 2"
    [{ map: 80, dopamine: 5.1 }, 3],
    [{ map: 80, dopamine: 15 }, 3],
    [{ map: 80, dopamine: 15.1 }, 4],
    [{ map: 80, dobutamine: 2.5 }, 2],
    [{ map: 60, norepinephrine: 0.05 }, 3],
    [{ map: 80, norepinephrine: 0.1 }, 3],
    [{ map: 80, norepinephrine: 0.11 }, 4],
    [{ map: 80, epinephrine: 0.1 }, 3],
    [{ map: 80, epinephrine: 0.11 }, 4],
    [{ dobutamine: 5 }, 2],
    [{ norepinephrine: 0 }, undefined],
    [{}, undefined],
  ])('%o → %s', (input, pts) => expect(sofaCardiovascular(input)).toBe(pts));
});

describe('SOFA over the 24 h window', () => {
  it('scores the worst value of the preceding 24 h, half-open at 24 h', () => {
    const rows: RowInput[] = [
      { min: 0, cells: { platelets: 40 } },
      { min: 60, cells: { platelets: 180 } },
      { min: 24 * 60 - 1, cells: { hr: 80 } },
      { min: 24 * 60, cells: { hr: 80 } },
    ];
    const d = deriveAll(worksheet({ rows }));
    expect(d.rows[2]!.scores.sofa.parts.coagulation).toBe(3); // 40 is 23 h 59 min old
    expect(d.rows[3]!.scores.sofa.parts.coagulation).toBe(0); // 40 is exactly 24 h old: out
    expect(d.rows[3]!.scores.sofa.evidence.coagulation).toMatchObject({ key: 'platelets', value: 180 });
  });

  it('lists every organ with nothing charted as missing and never guesses', () => {
    const s = scoresOf([{ min: 0, cells: { hr: 80 } }]).sofa;
    expect(s.score).toBe(0);
    expect(s.complete).toBe(false);
    expect(s.parts).toEqual({});
    expect(s.missing).toEqual(['pf_ratio', 'platelets', 'bilirubin', 'map', 'gcs', 'creatinine']);
  });

  it('adds all six parts for a complete record', () => {
    const s = scoresOf([
      { min: 0, cells: { pao2: 90, fio2: 0.35, platelets: 90, bilirubin: 2.5, sbp: 95, dbp: 50, gcs: 13, creatinine: 2.2 } },
    ]).sofa;
    // P/F 257 → 2; platelets 90 → 2; bilirubin 2.5 → 2; MAP 65 → 1; GCS 13 → 1; creatinine 2.2 → 2.
    expect(s.parts).toEqual({ respiration: 2, coagulation: 2, liver: 2, cardiovascular: 1, cns: 1, renal: 2 });
    expect(s.score).toBe(10);
    expect(s.complete).toBe(true);
    expect(s.missing).toEqual([]);
  });

  it('counts a catecholamine only after it has run 1 h (Sepsis-3 Table 1 footnote)', () => {
    const base: RowInput[] = [{ min: 0, cells: { norepinephrine: 0.2, map: 72 } }];
    const at30 = scoresOf([...base, { min: 30, cells: { map: 72 } }]).sofa;
    expect(at30.parts.cardiovascular).toBe(0);
    expect(at30.notes.join(' ')).toMatch(/norepinephrine 0.2 .*less than 1 h/);
    const at60 = scoresOf([...base, { min: 60, cells: { map: 72 } }]).sofa;
    expect(at60.parts.cardiovascular).toBe(4);
    expect(at60.evidence.cardiovascular).toMatchObject({ key: 'norepinephrine', value: 0.2 });
  });

  it('scores the highest rate held ≥ 1 h without a break', () => {
    // NE 0.2 for 40 min, then 0.05: 0.2 never held an hour, ≥ 0.05 held 90 min → 3 points.
    const s = scoresOf([
      { min: 0, cells: { norepinephrine: 0.2, map: 72 } },
      { min: 40, cells: { norepinephrine: 0.05 } },
      { min: 90, cells: { map: 72 } },
    ]).sofa;
    expect(s.parts.cardiovascular).toBe(3);
  });

  it('a stopped drug (0) still counts in the 24 h after it ran an hour', () => {
    const s = scoresOf([
      { min: 0, cells: { dopamine: 10, map: 72 } },
      { min: 120, cells: { dopamine: 0 } },
      { min: 600, cells: { map: 75 } },
    ]).sofa;
    expect(s.parts.cardiovascular).toBe(3);
  });

  it('uses urine output per day when 24 h of urine is charted, the worse of it and creatinine', () => {
    const rows: RowInput[] = [
      { min: 0, cells: { hr: 80 } },
      { min: 360, cells: { uo_ml: 100 } },
      { min: 720, cells: { uo_ml: 100, creatinine: 1.0 } },
      { min: 1080, cells: { uo_ml: 100 } },
      { min: 1440, cells: { uo_ml: 100 } },
    ];
    const s = scoresOf(rows).sofa;
    expect(s.parts.renal).toBe(3); // 400 mL/day < 500
    expect(s.evidence.renal).toMatchObject({ key: 'uo_ml', value: 400 });
    // One interval without a urine volume: creatinine only, and it says so.
    const gap = scoresOf(rows.map((r, k) => (k === 3 ? { min: r.min, cells: { hr: 80 } } : r))).sofa;
    expect(gap.parts.renal).toBe(0);
    expect(gap.notes.join(' ')).toMatch(/creatinine only/);
  });

  it('renal from urine alone still lists creatinine as missing (it could raise the part)', () => {
    const rows: RowInput[] = [0, 360, 720, 1080, 1440].map((min, k): RowInput => ({ min, cells: k === 0 ? { hr: 80 } : { uo_ml: 300 } }));
    const s = scoresOf(rows).sofa;
    expect(s.parts.renal).toBe(0); // 1200 mL/day
    expect(s.missing).toContain('creatinine');
  });

  it('renal is missing with neither creatinine nor 24 h of urine', () => {
    const s = scoresOf([
      { min: 0, cells: { uo_ml: 50 } },
      { min: 60, cells: { uo_ml: 50 } },
    ]).sofa;
    expect(s.parts.renal).toBeUndefined();
    expect(s.missing).toContain('creatinine');
  });
});

describe('qSOFA (Sepsis-3; RR ≥ 22 and SBP ≤ 100 are positive, reference §15 #9)', () => {
  it('RR 22 and SBP 100 each score, and together are positive', () => {
    const q = scoresOf([{ min: 0, cells: { rr: 22, sbp: 100, gcs: 15 } }]).qsofa;
    expect(q.parts).toEqual({ respiratory_rate: 1, systolic_pressure: 1, mentation: 0 });
    expect(q.score).toBe(2);
    expect(q.positive).toBe(true);
  });

  it('RR 21, SBP 101, GCS 15 score nothing', () => {
    const q = scoresOf([{ min: 0, cells: { rr: 21, sbp: 101, gcs: 15 } }]).qsofa;
    expect(q.score).toBe(0);
    expect(q.positive).toBe(false);
  });

  it('altered mentation is GCS < 15 (Seymour 2016, from memory per reference §5)', () => {
    expect(scoresOf([{ min: 0, cells: { gcs: 14 } }]).qsofa.parts.mentation).toBe(1);
    expect(scoresOf([{ min: 0, cells: { gcs: 15 } }]).qsofa.parts.mentation).toBe(0);
  });

  it('lists missing parts and leaves positivity open when they could change it', () => {
    const q = scoresOf([{ min: 0, cells: { rr: 24 } }]).qsofa;
    expect(q.missing).toEqual(['sbp', 'gcs']);
    expect(q.positive).toBeUndefined();
    const neg = scoresOf([{ min: 0, cells: { rr: 12, sbp: 130 } }]).qsofa;
    expect(neg.missing).toEqual(['gcs']);
    expect(neg.positive).toBe(false); // 0 + 1 missing < 2
  });
});

describe('SIRS (Bone 1992 by default; SEP-1 variant selectable, reference §7, §3a, §15 #4–5)', () => {
  const full = { hr: 80, rr: 16, wbc: 8 };
  it.each([
    [38.0, 0, 0],
    [38.1, 1, 0],
    [38.3, 1, 0],
    [38.4, 1, 1],
    [36.0, 0, 0],
    [35.9, 1, 1],
  ])('temperature %s °C: Bone %s, SEP-1 %s', (t, bone, sep1) => {
    expect(scoresOf([{ min: 0, cells: { ...full, temp: t } }]).sirs.parts.temperature).toBe(bone);
    expect(scoresOf([{ min: 0, cells: { ...full, temp: t } }], { sirsCriteria: 'sep1' }).sirs.parts.temperature).toBe(sep1);
  });

  it('100.4 °F (= 38.0 °C) is not above 38.0; 100.94 °F (= 38.3 °C) is not above 38.3 (reference §12 vectors)', () => {
    const t1 = canonical('temp', '100.4 F');
    const t2 = canonical('temp', '100.94 F');
    expect(scoresOf([{ min: 0, cells: { ...full, temp: t1 } }]).sirs.parts.temperature).toBe(0);
    expect(scoresOf([{ min: 0, cells: { ...full, temp: t2 } }], { sirsCriteria: 'sep1' }).sirs.parts.temperature).toBe(0);
    expect(scoresOf([{ min: 0, cells: { ...full, temp: canonical('temp', '96.8 F') } }]).sirs.parts.temperature).toBe(0);
  });

  it.each([
    ['hr', 90, 'heart_rate', 0],
    ['hr', 91, 'heart_rate', 1],
    ['rr', 20, 'respiratory', 0],
    ['rr', 21, 'respiratory', 1],
    ['wbc', 12, 'white_cells', 0],
    ['wbc', 12.1, 'white_cells', 1],
    ['wbc', 4, 'white_cells', 0],
    ['wbc', 3.9, 'white_cells', 1],
  ] as const)('%s %s → %s %s', (key, v, part, pts) => {
    const s = scoresOf([{ min: 0, cells: { temp: 37, ...full, [key]: v } }]).sirs;
    expect(s.parts[part]).toBe(pts);
  });

  it('PaCO2 < 32 meets the respiratory criterion under Bone 1992 only', () => {
    const rows: RowInput[] = [{ min: 0, cells: { temp: 37, hr: 80, rr: 16, wbc: 8, paco2: 31 } }];
    expect(scoresOf(rows).sirs.parts.respiratory).toBe(1);
    expect(scoresOf(rows, { sirsCriteria: 'sep1' }).sirs.parts.respiratory).toBe(0);
    const at32: RowInput[] = [{ min: 0, cells: { temp: 37, hr: 80, rr: 16, wbc: 8, paco2: 32 } }];
    expect(scoresOf(at32).sirs.parts.respiratory).toBe(0);
  });

  it('≥ 2 criteria is positive; missing criteria are listed', () => {
    const s = scoresOf([{ min: 0, cells: { temp: 38.5, hr: 110 } }]).sirs;
    expect(s.score).toBe(2);
    expect(s.positive).toBe(true);
    expect(s.missing).toEqual(['rr', 'wbc']);
    expect(s.criteria).toBe('bone1992');
  });
});

describe('score values in deriveAll', () => {
  it('puts the totals under the keys sofa, qsofa, sirs', () => {
    const d = deriveAll(worksheet({ rows: [{ min: 0, cells: { rr: 24, sbp: 95, gcs: 14, temp: 38.6, hr: 120 } }] }));
    expect(d.rows[0]!.values['qsofa']).toBe(3);
    expect(d.rows[0]!.values['sirs']).toBe(3);
    // SOFA: MAP unknown (no DBP), GCS 14 → 1; other organs missing.
    expect(d.rows[0]!.values['sofa']).toBe(1);
  });

  it('leaves a score out where nothing it needs is charted', () => {
    const d = deriveAll(worksheet({ rows: [{ min: 0, cells: { lactate: 2 } }] }));
    expect(d.rows[0]!.values['sofa']).toBeUndefined();
    expect(d.rows[0]!.values['qsofa']).toBeUndefined();
  });
});

describe('window scanning', () => {
  it('the sliding scanner gives the same extremes as a direct scan, from any starting row (fast-check)', () => {
    const rowsArb = fc.array(
      fc.record({
        gap: fc.integer({ min: 0, max: 600 }),
        platelets: fc.option(fc.integer({ min: 10, max: 40 }), { nil: undefined }),
        gcs: fc.option(fc.integer({ min: 3, max: 6 }), { nil: undefined }),
      }),
      { minLength: 1, maxLength: 60 },
    );
    fc.assert(
      fc.property(rowsArb, fc.nat(), fc.constantFrom(1, 6, 24), (rows, startAt, windowHours) => {
        let t = 0;
        const times = rows.map((r) => (t += r.gap * 60_000));
        const input = makeScoreInput(times, (j, key) =>
          key === 'platelets' ? rows[j]!.platelets : key === 'gcs' ? rows[j]!.gcs : undefined,
        );
        const scanner = new WindowScanner(input, windowHours);
        for (let i = startAt % rows.length; i < rows.length; i++) {
          expect(scanner.at(i)).toEqual(scanWindow(input, i, windowHours));
        }
      }),
      { numRuns: 300 },
    );
  });
});
