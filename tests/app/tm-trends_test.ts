// <tm-trends> in Chromium on the fictional demo worksheet (src/app/demo-scenario.ts). The plotted
// points are checked against the rows with formulas written out here from the reference file
// (/work/shared/reference/clinical-check-values.md), the target bands against the goal-set data
// and the published figures, the links to the grid with real key presses, and accessibility with
// axe-core (Deque's WCAG 2.x rule set). Data: invented and fictional only.
import { sendKeys } from '@web/test-runner-commands';
import { expect } from 'chai';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import '../../src/app/tm-trends.js';
import type { TmTrends, TrendPointDetail } from '../../src/app/tm-trends.js';
import { evaluate, worksheetSetIds } from '../../src/goals/engine.js';
import { defaultRegistry } from '../../src/goals/registry.js';
import type { GoalStatus } from '../../src/goals/status.js';
import { deriveAll } from '../../src/sheet/derived.js';
import type { Row, Worksheet } from '../../src/sheet/model.js';

const NOW = Date.parse('2026-03-01T10:00:00Z');
const MIN = 60_000;
const KEYS = ['map', 'lactate', 'scvo2', 'uo_ml_kg_h', 'ne_equivalent'];

function demo(extraSets: string[] = []): Worksheet {
  let n = 0;
  const ws = demoWorksheet(NOW, () => `d${String(++n).padStart(3, '0')}`, 60);
  return { ...ws, goalSets: [...ws.goalSets, ...extraSets] };
}

interface Mounted {
  el: TmTrends;
  ws: Worksheet;
  goals: GoalStatus[];
  t0: number;
  root: ShadowRoot;
}

async function mount(ws: Worksheet): Promise<Mounted> {
  document.body.replaceChildren();
  const el = document.createElement('tm-trends');
  el.style.width = '900px';
  const goals = evaluate(ws, worksheetSetIds(ws), NOW);
  el.worksheet = ws;
  el.derived = deriveAll(ws).rows;
  el.goals = goals;
  el.now = NOW;
  document.body.append(el);
  await el.updateComplete;
  return { el, ws, goals, t0: Date.parse(ws.timeZero!.time), root: el.shadowRoot! };
}

function num(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  return c && typeof c.value === 'number' ? c.value : undefined;
}

/**
 * The value each panel should plot for a row, worked out here from the charted cells:
 * - MAP: measured, else DBP + (SBP − DBP)/3 (reference file §12, common practice);
 * - urine: mL / (kg × hours since the previous row) (reference file §13 rate formula);
 * - NE equivalent: NE + epi + phenylephrine/10 + dopamine/100 + vasopressin (U/min) × 2.5
 *   (Goradia 2021 as in reference file §10).
 */
function expectedValue(ws: Worksheet, i: number, key: string): number | undefined {
  const row = ws.rows[i]!;
  if (key === 'map') {
    const m = num(row, 'map');
    if (m !== undefined) return m;
    const s = num(row, 'sbp');
    const d = num(row, 'dbp');
    return s !== undefined && d !== undefined ? d + (s - d) / 3 : undefined;
  }
  if (key === 'uo_ml_kg_h') {
    const uo = num(row, 'uo_ml');
    if (uo === undefined || i === 0) return undefined;
    const hours = (Date.parse(row.time) - Date.parse(ws.rows[i - 1]!.time)) / 3_600_000;
    return uo / (ws.weightKg! * hours);
  }
  if (key === 'ne_equivalent') {
    const parts: [string, number][] = [
      ['norepinephrine', 1],
      ['epinephrine', 1],
      ['phenylephrine', 0.1],
      ['dopamine', 0.01],
      ['vasopressin', 2.5],
    ];
    const charted = parts.filter(([k]) => num(row, k) !== undefined);
    return charted.length ? charted.reduce((a, [k, f]) => a + num(row, k)! * f, 0) : undefined;
  }
  return num(row, key);
}

function points(root: ShadowRoot, key: string): SVGGElement[] {
  return [...root.querySelectorAll<SVGGElement>(`figure[data-key="${key}"] .pt`)];
}

function translate(el: Element): { x: number; y: number } {
  const m = /translate\(([-\d.]+) ([-\d.]+)\)/.exec(el.getAttribute('transform') ?? '');
  if (!m) throw new Error('point without a translate');
  return { x: Number(m[1]), y: Number(m[2]) };
}

describe('tm-trends: the demo worksheet’s trends match its rows', () => {
  it('plots, in each panel, one point per row with a value: the row, its value and its time since time zero', async () => {
    const h = await mount(demo());
    for (const key of KEYS) {
      const expected = h.ws.rows
        .map((r, i) => ({ rowId: r.id, value: expectedValue(h.ws, i, key), minutes: (Date.parse(r.time) - h.t0) / MIN }))
        .filter((x) => x.value !== undefined);
      const got = points(h.root, key).map((p) => ({
        rowId: p.dataset['row'],
        value: Number(p.dataset['value']),
        minutes: Number(p.dataset['minutes']),
      }));
      expect(
        got.map((g) => g.rowId),
        key,
      ).to.deep.equal(expected.map((e) => e.rowId));
      got.forEach((g, i) => {
        expect(g.value, `${key} value at ${String(g.rowId)}`).to.be.closeTo(expected[i]!.value!, 1e-9);
        expect(g.minutes, `${key} minutes at ${String(g.rowId)}`).to.equal(expected[i]!.minutes);
      });
    }
    // The demo charts MAP at most rows, lactate once, ScvO₂ once, urine from 45 min, NE from 100 min.
    expect(points(h.root, 'map').length).to.be.greaterThan(8);
    expect(points(h.root, 'ne_equivalent').map((p) => Number(p.dataset['minutes']))).to.deep.equal([100, 115, 125]);
  });

  it('places every point on one shared time axis (x linear in minutes, the same in every panel)', async () => {
    const h = await mount(demo());
    const all = KEYS.flatMap((k) => points(h.root, k)).map((p) => ({ m: Number(p.dataset['minutes']), x: translate(p).x }));
    const a = all.reduce((p, c) => (c.m < p.m ? c : p));
    const b = all.reduce((p, c) => (c.m > p.m ? c : p));
    const slope = (b.x - a.x) / (b.m - a.m);
    expect(slope).to.be.greaterThan(0);
    for (const p of all) expect(p.x, `x at ${p.m} min`).to.be.closeTo(a.x + slope * (p.m - a.m), 0.15);
    // Time zero's line sits at minute 0 of that axis.
    const t0Line = h.root.querySelector('figure[data-key="map"] line.t0')!;
    expect(Number(t0Line.getAttribute('x1'))).to.be.closeTo(a.x - slope * a.m, 0.15);
  });

  it('puts higher values higher within a panel (y decreasing in the value)', async () => {
    const h = await mount(demo());
    for (const key of KEYS) {
      const ps = points(h.root, key).map((p) => ({ v: Number(p.dataset['value']), y: translate(p).y }));
      for (const p of ps) for (const q of ps) if (p.v > q.v + 1e-9) expect(p.y, key).to.be.lessThan(q.y);
    }
  });
});

describe('tm-trends: target bands are the goal sets’ targets', () => {
  function rangeTargets(ws: Worksheet, goals: GoalStatus[]) {
    const out: { id: string; key: string; min: number | undefined; max: number | undefined; applies: boolean }[] = [];
    for (const setId of ws.goalSets) {
      const set = defaultRegistry.require(setId);
      for (const g of set.goals) {
        if (g.rule.kind !== 'target' || g.rule.test.kind !== 'range' || !KEYS.includes(g.rule.key)) continue;
        const st = goals.find((x) => x.id === `${setId}.${g.id}`)!;
        const applies =
          st.status !== 'not-applicable' && (g.rule.from === 'time-zero' || g.condition.kind === 'always' || st.conditionSince !== null);
        out.push({ id: st.id, key: g.rule.key, min: g.rule.test.min, max: g.rule.test.max, applies });
      }
    }
    return out;
  }

  for (const extra of [[], ['egdt']]) {
    it(`draws one labelled band per range target of the sets in force (${['defaults', ...extra].join(' + ')})`, async () => {
      const h = await mount(demo(extra));
      const targets = rangeTargets(h.ws, h.goals);
      expect(targets.length).to.be.greaterThan(1);
      for (const t of targets) {
        const rects = [...h.root.querySelectorAll<SVGRectElement>(`figure[data-key="${t.key}"] rect.band`)].filter((r) =>
          (r.dataset['goals'] ?? '').split(' ').includes(t.id),
        );
        if (!t.applies) {
          expect(rects, t.id).to.have.length(0);
          continue;
        }
        expect(rects, t.id).to.have.length(1);
        expect(rects[0]!.dataset['min'], `${t.id} min`).to.equal(t.min === undefined ? '' : String(t.min));
        expect(rects[0]!.dataset['max'], `${t.id} max`).to.equal(t.max === undefined ? '' : String(t.max));
        const word =
          t.min !== undefined && t.max !== undefined
            ? `target ${t.min}–${t.max}`
            : t.min !== undefined
              ? `target ≥ ${t.min}`
              : `target ≤ ${String(t.max)}`;
        const labels = [...h.root.querySelectorAll(`figure[data-key="${t.key}"] text.band-label`)].map((x) => x.textContent);
        expect(labels, t.id).to.include(word);
      }
    });
  }

  it('matches the published figures: MAP ≥ 65 from the first vasopressor, urine ≥ 0.5, EGDT MAP 65–90 and ScvO₂ ≥ 70', async () => {
    const h = await mount(demo(['egdt']));
    const band = (key: string, id: string) =>
      [...h.root.querySelectorAll<SVGRectElement>(`figure[data-key="${key}"] rect.band`)].find((r) =>
        (r.dataset['goals'] ?? '').split(' ').includes(id),
      );
    // SSC 2021: initial MAP target 65 mmHg in septic shock on vasopressors (reference file §1).
    const ssc = band('map', 'ssc2021-targets.map')!;
    expect(ssc.dataset['min']).to.equal('65');
    // It starts at the first vasopressor row (norepinephrine at 100 min in the demo).
    const firstPressor = points(h.root, 'ne_equivalent')[0]!;
    expect(Number(ssc.getAttribute('x'))).to.be.closeTo(translate(firstPressor).x, 0.15);
    // EGDT: MAP 65–90 mmHg, ScvO₂ ≥ 70 %, urine ≥ 0.5 mL/kg/h (Rivers 2001, reference file §4).
    const egdt = band('map', 'egdt.map')!;
    expect([egdt.dataset['min'], egdt.dataset['max']]).to.deep.equal(['65', '90']);
    expect(band('scvo2', 'egdt.scvo2')!.dataset['min']).to.equal('70');
    const uo = band('uo_ml_kg_h', 'egdt.urine-output')!;
    expect(uo.dataset['min']).to.equal('0.5');
    expect(uo.dataset['goals']).to.contain('ssc2021-targets.urine-output');
  });

  it('draws each point inside its band when in range and outside when not, with a shape for each', async () => {
    const h = await mount(demo(['egdt']));
    let judged = 0;
    for (const key of KEYS) {
      const rects = [...h.root.querySelectorAll<SVGRectElement>(`figure[data-key="${key}"] rect.band`)];
      for (const p of points(h.root, key)) {
        const { x, y } = translate(p);
        const verdict = [...p.classList].find((c) => c.startsWith('v-'))!.slice(2);
        const inForce = rects.filter((r) => Number(r.getAttribute('x')) <= x + 0.2);
        const inside = (r: SVGRectElement) =>
          y >= Number(r.getAttribute('y')) - 0.2 && y <= Number(r.getAttribute('y')) + Number(r.getAttribute('height')) + 0.2;
        const label = p.getAttribute('aria-label') ?? '';
        if (verdict === 'in') {
          judged += 1;
          expect(inForce.every(inside), `${key} ${String(p.dataset['row'])} inside`).to.equal(true);
          expect(p.querySelector('circle.mark'), 'in range: a dot').to.not.equal(null);
          expect(label).to.contain('in range');
        } else if (verdict === 'above' || verdict === 'below') {
          judged += 1;
          expect(
            inForce.some((r) => !inside(r)),
            `${key} ${String(p.dataset['row'])} outside`,
          ).to.equal(true);
          const d = p.querySelector('path.mark')!.getAttribute('d')!;
          // ▲ above: apex up (negative y); ▼ below: apex down.
          expect(d.startsWith(verdict === 'above' ? 'M0,-' : 'M0,7'), `${key} shape`).to.equal(true);
          expect(label).to.contain(`${verdict} target`);
        } else {
          expect(label).to.contain('no target in force');
        }
      }
    }
    expect(judged).to.be.greaterThan(8);
  });
});

describe('tm-trends: time zero, deadlines and events', () => {
  it('marks each goal deadline once at its time, and time zero', async () => {
    const h = await mount(demo());
    const model = h.el.trends!;
    const deadlineMinutes = [
      ...new Set(h.goals.filter((g) => g.deadline).map((g) => Math.round((Date.parse(g.deadline!) - h.t0) / MIN))),
    ].sort((a, b) => a - b);
    const drawn = deadlineMinutes.filter((m) => m >= model.xMin && m <= model.xMax);
    const later = deadlineMinutes.filter((m) => m > model.xMax);
    const lines = [...h.root.querySelectorAll('figure[data-key="map"] line.due')].map((l) => Number(l.getAttribute('x1')));
    expect(lines).to.have.length(drawn.length);
    const mapPts = points(h.root, 'map').map((p) => ({ m: Number(p.dataset['minutes']), x: translate(p).x }));
    const slope = (mapPts[mapPts.length - 1]!.x - mapPts[0]!.x) / (mapPts[mapPts.length - 1]!.m - mapPts[0]!.m);
    const x0 = mapPts[0]!.x - slope * mapPts[0]!.m;
    drawn.forEach((m, i) => expect(lines[i], `deadline at ${m} min`).to.be.closeTo(x0 + slope * m, 0.15));
    // Hour-1 bundle elements are due 60 min after time zero (reference file §2); SEP-1's 3 h
    // elements at 180 min (reference file §3b).
    expect(deadlineMinutes).to.include.members([60, 180]);
    expect(h.root.querySelectorAll('.later .due-text')).to.have.length(later.length);
    expect(h.root.querySelectorAll('figure[data-key="map"] line.t0')).to.have.length(1);
  });

  it('marks crystalloid, the antibiotic and the cultures at their rows', async () => {
    const h = await mount(demo());
    const at = (kind: string) => [...h.root.querySelectorAll<SVGGElement>(`.ev[data-kind="${kind}"]`)].map((g) => g.dataset['row']);
    expect(at('fluid')).to.deep.equal(h.ws.rows.filter((r) => (num(r, 'fluid_ml') ?? 0) > 0).map((r) => r.id));
    expect(at('antibiotic')).to.deep.equal(h.ws.rows.filter((r) => r.cells['antibiotic']).map((r) => r.id));
    expect(at('cultures')).to.deep.equal(h.ws.rows.filter((r) => r.cells['cultures_drawn']).map((r) => r.id));
    expect(h.root.querySelector('.ev[data-kind="fluid"] .sym')!.textContent).to.equal('◆');
    expect(h.root.querySelector('.ev[data-kind="antibiotic"] .sym')!.textContent).to.equal('A');
    expect(h.root.querySelector('.ev[data-kind="cultures"] .sym')!.textContent).to.equal('C');
  });
});

describe('tm-trends: linked to the grid', () => {
  it('pointing at a point sends tm-point with its row; leaving sends null', async () => {
    const h = await mount(demo());
    const seen: TrendPointDetail[] = [];
    document.body.addEventListener('tm-point', (e) => seen.push(e.detail));
    const p = points(h.root, 'map')[3]!;
    p.dispatchEvent(new PointerEvent('pointerenter'));
    p.dispatchEvent(new PointerEvent('pointerleave'));
    expect(seen).to.deep.equal([
      { rowId: p.dataset['row'], key: 'map', via: 'pointer' },
      { rowId: null, key: null, via: 'leave' },
    ]);
  });

  it('is reachable by keyboard: one tab stop per panel, arrows move between points and send tm-point', async () => {
    const h = await mount(demo());
    const seen: TrendPointDetail[] = [];
    h.el.addEventListener('tm-point', (e) => seen.push(e.detail));
    const pts = points(h.root, 'map');
    expect(pts.filter((p) => p.getAttribute('tabindex') === '0')).to.have.length(1);
    const stop = pts.find((p) => p.getAttribute('tabindex') === '0')!;
    expect(stop).to.equal(pts[pts.length - 1]);
    stop.focus();
    await sendKeys({ press: 'ArrowLeft' });
    await h.el.updateComplete;
    await new Promise((r) => setTimeout(r, 0));
    const active = h.root.activeElement as SVGGElement;
    expect(active.dataset['row']).to.equal(pts[pts.length - 2]!.dataset['row']);
    expect(seen.filter((d) => d.via === 'focus').map((d) => d.rowId)).to.deep.equal([
      pts[pts.length - 1]!.dataset['row'],
      pts[pts.length - 2]!.dataset['row'],
    ]);
    await sendKeys({ press: 'Enter' });
    expect(seen[seen.length - 1]).to.deep.equal({ rowId: pts[pts.length - 2]!.dataset['row'], key: 'map', via: 'activate' });
  });

  it('marks the selected row’s time on every panel and rings its values', async () => {
    const h = await mount(demo());
    const row = h.ws.rows.find((r) => num(r, 'norepinephrine') !== undefined && num(r, 'scvo2') !== undefined)!;
    h.el.selectedRowId = row.id;
    await h.el.updateComplete;
    const lines = [...h.root.querySelectorAll('line.sel-line')];
    expect(lines).to.have.length(1 + KEYS.length); // event strip + five panels
    const selPts = [...h.root.querySelectorAll<SVGGElement>('.pt.sel')];
    const withValue = KEYS.filter((k) => points(h.root, k).some((p) => p.dataset['row'] === row.id));
    expect(selPts).to.have.length(withValue.length);
    for (const p of selPts) expect(Number(lines[1]!.getAttribute('x1'))).to.be.closeTo(translate(p).x, 0.15);
    expect(h.root.querySelector('.sel-note')!.textContent).to.contain('Selected row');
    // The roving tab stop follows the selection.
    expect(points(h.root, 'map').find((p) => p.getAttribute('tabindex') === '0')!.dataset['row']).to.equal(row.id);
  });
});

describe('tm-trends: accessible', () => {
  it('gives each trend a summary sentence and a table of its values with a status word and symbol', async () => {
    const h = await mount(demo(['egdt']));
    for (const key of KEYS) {
      const fig = h.root.querySelector(`figure[data-key="${key}"]`)!;
      const cap = h.root.getElementById(fig.getAttribute('aria-describedby')!)!;
      expect(cap.textContent.length, key).to.be.greaterThan(20);
      const n = points(h.root, key).length;
      if (n === 0) {
        expect(cap.textContent).to.contain('no values charted');
        continue;
      }
      const rows = [...fig.querySelectorAll('tbody tr')];
      expect(rows, key).to.have.length(n);
      for (const tr of rows)
        expect(tr.lastElementChild!.textContent).to.match(/^[●▲▼○] (in range|above target|below target|no target in force)/);
    }
    const map = h.root.querySelector('#cap-map')!.textContent;
    expect(map).to.match(/^MAP: \d+ values, from/);
  });

  it('uses no inline style attributes (strict CSP) and passes axe-core without serious violations', async () => {
    const h = await mount(demo(['egdt']));
    h.el.selectedRowId = h.ws.rows[5]!.id;
    await h.el.updateComplete;
    expect(h.root.querySelectorAll('[style]')).to.have.length(0);
    const w = window as unknown as {
      axe?: { run(c: Element, o: object): Promise<{ violations: { id: string; impact?: string | null; nodes: unknown[] }[] }> };
    };
    if (!w.axe) {
      await new Promise<void>((resolve, reject) => {
        const s = document.createElement('script');
        s.src = '/node_modules/axe-core/axe.min.js';
        s.onload = () => resolve();
        s.onerror = () => reject(new Error('could not load axe-core'));
        document.head.append(s);
      });
    }
    const result = await w.axe!.run(h.el, { resultTypes: ['violations'] });
    const serious = result.violations
      .filter((v) => v.impact === 'serious' || v.impact === 'critical')
      .map((v) => `${v.id}: ${JSON.stringify(v.nodes)}`);
    expect(serious).to.deep.equal([]);
  });
});
