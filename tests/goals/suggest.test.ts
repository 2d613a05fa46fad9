// Time-zero suggestions from SEP-1 criteria.
// Rules: reference file §3a — severe sepsis = documented suspected infection + ≥ 2 SEP-1 SIRS
// criteria + ≥ 1 organ dysfunction, all within 6 h of each other; presentation time = when the
// last criterion was met (IDSA 2021 Table 3; BMJ Qual Saf comparison table; Boston City EM SEP-1
// summary). SEP-1 SIRS: temp > 38.3 or < 36.0 °C, HR > 90, RR > 20, WBC > 12 or < 4 ×10³/µL.
// Septic shock: initial lactate ≥ 4, or persistent hypotension after 30 mL/kg (§3a/§3b).
import { describe, expect, it } from 'vitest';
import { sep1OrganCriteria, sep1SirsCriteria, sep1Oliguria, suggestTimeZero } from '../../src/goals/index.js';
import { at, iso, rowId, sheet } from './fixture.js';

describe('SEP-1 SIRS criteria (§3a; §15 #4, #5: differ from Bone 1992)', () => {
  const crit = (v: Parameters<typeof sep1SirsCriteria>[0]) => sep1SirsCriteria(v).map((c) => c.criterion);
  it('temperature: 38.3 and 36.0 do not count; 38.4 and 35.9 do (Bone 1992 would count 38.1)', () => {
    expect(crit({ temp: 38.3 })).toEqual([]);
    expect(crit({ temp: 38.1 })).toEqual([]);
    expect(crit({ temp: 36.0 })).toEqual([]);
    expect(crit({ temp: 38.4 })).toEqual(['temp']);
    expect(crit({ temp: 35.9 })).toEqual(['temp']);
  });
  it('heart rate > 90, respiratory rate > 20, WBC > 12 or < 4', () => {
    expect(crit({ hr: 90, rr: 20, wbc: 12 })).toEqual([]);
    expect(crit({ wbc: 4 })).toEqual([]);
    expect(crit({ hr: 91, rr: 21, wbc: 12.1 })).toEqual(['hr', 'rr', 'wbc']);
    expect(crit({ wbc: 3.9 })).toEqual(['wbc']);
  });
});

describe('SEP-1 organ dysfunction (§3a; §15 #7: SBP drop exactly 40 is not hypotension)', () => {
  const crit = (v: Parameters<typeof sep1OrganCriteria>[0], base?: number) => sep1OrganCriteria(v, base).map((c) => c.criterion);
  it('at the thresholds nothing counts', () => {
    expect(crit({ sbp: 90, map: 65, creatinine: 2.0, bilirubin: 2, platelets: 100, inr: 1.5, lactate: 2.0 }, 130)).toEqual([]);
  });
  it('just past each threshold it counts', () => {
    expect(crit({ sbp: 89, map: 64, creatinine: 2.01, bilirubin: 2.1, platelets: 99, inr: 1.6, lactate: 2.1 })).toEqual([
      'sbp',
      'map',
      'creatinine',
      'bilirubin',
      'platelets',
      'inr',
      'lactate',
    ]);
  });
  it('SBP drop of 40 from baseline does not count; 41 does', () => {
    expect(crit({ sbp: 110 }, 150)).toEqual([]);
    expect(crit({ sbp: 109 }, 150)).toEqual(['sbp-drop']);
  });
  it('urine < 0.5 mL/kg/h counts once it has lasted 2 consecutive hours', () => {
    const h = 3_600_000;
    const hits = sep1Oliguria([
      { rowId: 'a', startMs: 0, endMs: h, rate: 0.4 },
      { rowId: 'b', startMs: h, endMs: 1.5 * h, rate: 0.45 },
      { rowId: 'c', startMs: 1.5 * h, endMs: 2 * h, rate: 0.3 },
    ]);
    expect(hits.map((x) => x.rowId)).toEqual(['c']);
    expect(hits[0]!.rowIds).toEqual(['a', 'b', 'c']);
    // A rate of exactly 0.5 breaks the run.
    expect(
      sep1Oliguria([
        { rowId: 'a', startMs: 0, endMs: h, rate: 0.4 },
        { rowId: 'b', startMs: h, endMs: 2 * h, rate: 0.5 },
      ]),
    ).toEqual([]);
  });
});

describe('suggestTimeZero: severe sepsis presentation', () => {
  it('is the time the last criterion was met, with its supporting rows', () => {
    const ws = sheet({ t0: null }, [
      [0, { infection_suspected: true }],
      [30, { temp: 38.9, hr: 112 }],
      [60, { lactate: 2.6 }],
    ]);
    const s = suggestTimeZero(ws);
    expect(s.severeSepsis?.time).toBe(iso(60));
    expect(s.severeSepsis?.basis).toBe('criteria');
    expect(s.severeSepsis?.rowIds).toEqual([rowId(0), rowId(1), rowId(2)]);
    expect(s.severeSepsis?.criteria.map((c) => c.criterion)).toEqual(['infection', 'sirs:temp', 'sirs:hr', 'organ:lactate']);
  });

  it('needs all three within 6 h: 360 min apart counts, 361 min does not', () => {
    const inWindow = sheet({ t0: null }, [
      [0, { infection_suspected: true }],
      [100, { hr: 100, rr: 24 }],
      [360, { sbp: 85 }],
    ]);
    expect(suggestTimeZero(inWindow).severeSepsis?.time).toBe(iso(360));
    const outside = sheet({ t0: null }, [
      [0, { infection_suspected: true }],
      [100, { hr: 100, rr: 24 }],
      [361, { sbp: 85 }],
    ]);
    const s = suggestTimeZero(outside);
    expect(s.severeSepsis).toBeNull();
    expect(s.notes[0]).toMatch(/No severe sepsis presentation found/);
  });

  it('needs two distinct SIRS criteria (the same one twice is not enough)', () => {
    const ws = sheet({ t0: null }, [
      [0, { infection_suspected: true, hr: 100 }],
      [30, { hr: 105, lactate: 3 }],
    ]);
    expect(suggestTimeZero(ws).severeSepsis).toBeNull();
  });

  it('uses an SBP drop > 40 from the baseline and 2 h of low urine as organ dysfunction', () => {
    const drop = sheet({ t0: null, baselineSbp: 150 }, [
      [0, { infection_suspected: true, hr: 100, rr: 24 }],
      [20, { sbp: 109 }],
    ]);
    expect(suggestTimeZero(drop).severeSepsis?.time).toBe(iso(20));
    const urine = sheet({ t0: null, weightKg: 70 }, [
      [0, { infection_suspected: true, hr: 100, rr: 24 }],
      [60, { uo_ml: 20 }],
      [120, { uo_ml: 20 }],
    ]);
    const s = suggestTimeZero(urine);
    expect(s.severeSepsis?.time).toBe(iso(120));
    expect(s.severeSepsis?.criteria.map((c) => c.criterion)).toContain('organ:urine');
  });

  it('finds criteria in rows entered out of order and never changes the worksheet', () => {
    const ws = sheet({ t0: null }, [
      [60, { lactate: 2.6 }],
      [30, { temp: 38.9, hr: 112 }],
      [0, { infection_suspected: true }],
    ]);
    const before = JSON.stringify(ws);
    expect(suggestTimeZero(ws).severeSepsis?.time).toBe(iso(60));
    expect(JSON.stringify(ws)).toBe(before);
    expect(ws.timeZero).toBeUndefined();
  });

  it('ignores rows after the asked moment', () => {
    const ws = sheet({ t0: null }, [
      [0, { infection_suspected: true, hr: 100, rr: 24 }],
      [90, { lactate: 3 }],
    ]);
    expect(suggestTimeZero(ws, at(60)).severeSepsis).toBeNull();
    expect(suggestTimeZero(ws, at(90)).severeSepsis?.time).toBe(iso(90));
  });
});

describe('suggestTimeZero: septic shock presentation', () => {
  it('initial lactate exactly 4.0 → shock at the later of severe sepsis and the lactate', () => {
    const ws = sheet({ t0: null, weightKg: 70 }, [
      [0, { infection_suspected: true, hr: 100, rr: 24, sbp: 85 }],
      [20, { lactate: 4.0 }],
    ]);
    const s = suggestTimeZero(ws);
    expect(s.severeSepsis?.time).toBe(iso(0));
    expect(s.septicShock?.time).toBe(iso(20));
    expect(s.septicShock?.rowIds).toEqual([rowId(1)]);
  });

  it('lactate before severe sepsis presentation gives shock at the presentation time, never earlier', () => {
    const ws = sheet({ t0: null, weightKg: 70 }, [
      [0, { lactate: 4.5 }],
      [30, { infection_suspected: true, hr: 100, rr: 24 }],
    ]);
    const s = suggestTimeZero(ws);
    expect(s.severeSepsis?.time).toBe(iso(30));
    expect(s.septicShock?.time).toBe(iso(30));
  });

  it('persistent hypotension after 30 mL/kg: two consecutive low readings within 1 h after fluids end', () => {
    const ws = sheet({ t0: null, weightKg: 70 }, [
      [0, { infection_suspected: true, hr: 100, rr: 24, lactate: 2.5 }],
      [30, { fluid_ml: 1000 }],
      [60, { fluid_ml: 1100 }],
      [80, { map: 62 }],
      [95, { sbp: 84 }],
    ]);
    const s = suggestTimeZero(ws);
    expect(s.septicShock?.time).toBe(iso(95));
    expect(s.septicShock?.rowIds).toEqual([rowId(3), rowId(4)]);
  });

  it('no shock with lactate 3.9 and no persistent hypotension; uses time zero when no severe sepsis is found', () => {
    const ws = sheet({ weightKg: 70 }, [[0, { lactate: 3.9, map: 70 }]]);
    const s = suggestTimeZero(ws);
    expect(s.severeSepsis).toBeNull();
    expect(s.septicShock).toBeNull();
    const withT0 = sheet({ t0: 0, weightKg: 70 }, [[10, { lactate: 4.1 }]]);
    expect(suggestTimeZero(withT0).septicShock?.time).toBe(iso(10));
  });
});
