// The formula engine's mathjs instance is built from the few factories formulas can reach in
// mathjs's number-only build, not from create(all) (a much smaller bundle), with lazy and / or /
// ?? of its own. These checks pin what that must not change:
// - mathjs evaluates `and` / `or` lazily since 12.2.0 (mathjs HISTORY.md, "2023-12-08, 12.2.0:
//   Feat: lazy evaluation of operators and, or"): the right side is not read when the left
//   decides, so a guard such as `has(lactate) and lactate > 2` is false, not missing, at a row
//   without lactate;
// - the conditional reads only the branch taken (HISTORY.md: "Changed the behavior of the
//   conditional operator (a ? b : c) to lazy");
// - the allowed functions keep their mathjs meaning (round half away from zero, log with a base).
import { describe, expect, it } from 'vitest';
import { compileFormula, mapResolver } from '../../src/sheet/formula-engine.js';

function run(text: string, values: Record<string, number>): unknown {
  const r = compileFormula(text);
  if (!r.ok) throw new Error(r.error);
  return r.formula.evaluate(mapResolver(values));
}

describe('restricted mathjs instance', () => {
  it('evaluates and / or lazily, so a has() guard never reports a missing value', () => {
    expect(run('has(lactate) and lactate > 2', {})).toEqual({ ok: true, value: false });
    expect(run('not has(lactate) or lactate > 2', {})).toEqual({ ok: true, value: true });
    expect(run('has(lactate) and lactate > 2', { lactate: 3 })).toEqual({ ok: true, value: true });
    // Without a guard the missing value is still reported.
    expect(run('map > 65 and lactate > 2', { map: 70 })).toEqual({ ok: false, missing: ['lactate'] });
  });

  it('reads only the branch a conditional takes', () => {
    expect(run('has(scvo2) ? scvo2 : 70', {})).toEqual({ ok: true, value: 70 });
  });

  it('keeps the allowed functions and operators working on numbers', () => {
    // round(2.5) = 3 and round(-2.5) = -3 in mathjs (half away from zero); log(8, 2) = 3.
    expect(run('round(hr / 4) + round(-hr / 4)', { hr: 10 })).toEqual({ ok: true, value: 0 });
    expect(run('round(hr / 4)', { hr: 10 })).toEqual({ ok: true, value: 3 });
    expect(run('log(hr, 2)', { hr: 8 })).toEqual({ ok: true, value: 3 });
    expect(
      run('min(map, sbp) + max(1, 2) + abs(-1) + floor(1.7) + ceil(1.2) + sqrt(16) + exp(0) + pow(2, 3) + hr mod 4', {
        map: 60,
        sbp: 90,
        hr: 10,
      }),
    ).toEqual({
      ok: true,
      value: 60 + 2 + 1 + 1 + 2 + 4 + 1 + 8 + 2,
    });
    expect(run('(map >= 65) xor (sbp < 90)', { map: 70, sbp: 80 })).toEqual({ ok: true, value: false });
    expect(run('uo_ml ?? 0', {})).toEqual({ ok: true, value: 0 });
  });
});
