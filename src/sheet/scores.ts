/**
 * SOFA, qSOFA and SIRS at each row, from the values charted in the preceding 24 hours (pure).
 *
 * The window at a row is every row at or before it (by position) whose time is later than the
 * row's time minus 24 h: `(t − 24 h, t]`. Within it each component takes its worst value
 * (lowest P/F, platelets, MAP and GCS; highest bilirubin and creatinine; SIRS and qSOFA: a
 * criterion is met when any value in the window meets it).
 *
 * No score guesses: a component with no value in the window is listed in `missing` (by measure
 * key), `score` is the sum of the parts that could be scored, and `complete` says whether every
 * part was. Version: SOFA as in Sepsis-3 Table 1 (Singer et al., JAMA 2016;315:801–810, adapted
 * from Vincent et al., Intensive Care Med 1996;22:707–710) — not SOFA-2 (JAMA 2025).
 *
 * Decisions where the table leaves a gap (reference file §15):
 * - Every cut-off is a half-open interval: a value equal to a band's lower bound belongs to that
 *   band (bilirubin 12.0 mg/dL → 4; creatinine 5.0 → 4; bilirubin 1.95 → 1) (§15 #3).
 * - µmol/L values are converted to mg/dL (88.4 creatinine, 17.1 bilirubin) and scored on the
 *   mg/dL cut-offs, not on the rounded µmol/L columns of the table (§15 #2).
 * - Dopamine exactly 5.0 µg/kg/min scores 2, as in Vincent 1996 ("≤ 5 → 2, > 5 → 3"); Sepsis-3
 *   Table 1 writes "< 5" and "5.1–15", which leaves 5.0 in a gap (§15 #1).
 * - P/F < 200 scores 3 or 4 only with respiratory support. Tidemark has no ventilation key, so
 *   unless the caller says support is in place, P/F < 200 scores 2 and `respiratory_support` is
 *   listed as missing ("common interpretation of the table", reference file §6).
 * - Catecholamines count when given for at least 1 h (Sepsis-3 Table 1 footnote): a drug cell is
 *   the rate running from its row until the next cell of that drug (carried forward; 0 = stopped).
 *   The dose scored is the highest rate held for ≥ 1 h without a break, in a run that reaches
 *   into the window. Phenylephrine and vasopressin are not in the 1996 table and are not scored.
 * - Renal: the worse of creatinine and urine output per day, using urine only when every row of
 *   the window has a urine volume and the rows cover at least 24 h (the volume is scaled to 24 h).
 * - qSOFA "altered mentation" is GCS < 15 (Seymour et al., JAMA 2016; reference file §5).
 * - SIRS: Bone et al. 1992 by default; the SEP-1 variant (temperature > 38.3 °C, no PaCO₂
 *   alternative) is selectable. Immature (band) forms are not charted in Tidemark, so the white
 *   cell criterion uses the count alone.
 */

/** Score keys, in the derived-measure vocabulary. */
export const SCORE_KEYS = ['sofa', 'qsofa', 'sirs'] as const;

export type SirsCriteria = 'bone1992' | 'sep1';

export interface ScoreOptions {
  /** Hours looked back from each row; default 24. */
  windowHours?: number;
  /** SIRS criteria set; default Bone 1992. */
  sirsCriteria?: SirsCriteria;
  /** Respiratory support (mechanical ventilation, CPAP...) in place; undefined = not known. */
  respiratorySupport?: boolean;
  /** Hours a catecholamine must run before it is scored; default 1 (Sepsis-3 Table 1 footnote). */
  catecholamineMinHours?: number;
}

export const DEFAULT_WINDOW_HOURS = 24;
const HOUR_MS = 3_600_000;

/** What the scores read: row times and, per key, a column of values (NaN where missing). */
export interface ScoreInput {
  /** Row times, ms since the epoch, ascending. */
  readonly times: readonly number[];
  /** Charted value of a key at each row, else its built-in derived value (MAP estimate, P/F); NaN when missing. */
  column(key: string): Float64Array;
  /** Index of the last row at or before `rowIndex` with a value of `key`, or −1. */
  lastIndexAtOrBefore(key: string, rowIndex: number): number;
}

/**
 * Builds a ScoreInput from a value function. Each key's column (and its last-charted index) is
 * built on first use, so build the input after every row's built-in values are final.
 */
export function makeScoreInput(times: readonly number[], value: (rowIndex: number, key: string) => number | undefined): ScoreInput {
  const columns = new Map<string, Float64Array>();
  const last = new Map<string, Int32Array>();
  const column = (key: string): Float64Array => {
    let col = columns.get(key);
    if (!col) {
      col = new Float64Array(times.length);
      for (let j = 0; j < times.length; j++) col[j] = value(j, key) ?? Number.NaN;
      columns.set(key, col);
    }
    return col;
  };
  return {
    times,
    column,
    lastIndexAtOrBefore(key, rowIndex) {
      let arr = last.get(key);
      if (!arr) {
        const col = column(key);
        arr = new Int32Array(times.length);
        let l = -1;
        for (let j = 0; j < times.length; j++) {
          if (!Number.isNaN(col[j]!)) l = j;
          arr[j] = l;
        }
        last.set(key, arr);
      }
      return rowIndex < 0 ? -1 : arr[Math.min(rowIndex, times.length - 1)]!;
    },
  };
}

// --- Single-component cut-offs (exported so each cut-off is tested on its own) ---------------

export interface RespirationPoints {
  points: number;
  /** True when P/F < 200 and respiratory support is not known, so 3–4 could apply. */
  supportUnknown: boolean;
}

/**
 * SOFA respiration from P/F (mmHg). Sepsis-3 Table 1: ≥ 400 → 0; < 400 → 1; < 300 → 2;
 * < 200 with respiratory support → 3; < 100 with support → 4.
 */
export function sofaRespiration(pf: number, support?: boolean): RespirationPoints {
  if (pf >= 400) return { points: 0, supportUnknown: false };
  if (pf >= 300) return { points: 1, supportUnknown: false };
  if (pf >= 200 || support !== true) return { points: 2, supportUnknown: pf < 200 && support === undefined };
  return { points: pf >= 100 ? 3 : 4, supportUnknown: false };
}

/** SOFA coagulation from platelets ×10³/µL: ≥ 150 → 0; < 150 → 1; < 100 → 2; < 50 → 3; < 20 → 4. */
export function sofaCoagulation(platelets: number): number {
  if (platelets >= 150) return 0;
  if (platelets >= 100) return 1;
  if (platelets >= 50) return 2;
  if (platelets >= 20) return 3;
  return 4;
}

/** SOFA liver from bilirubin mg/dL: < 1.2 → 0; 1.2–1.9 → 1; 2.0–5.9 → 2; 6.0–11.9 → 3; ≥ 12.0 → 4 (half-open). */
export function sofaLiver(bilirubin: number): number {
  if (bilirubin < 1.2) return 0;
  if (bilirubin < 2.0) return 1;
  if (bilirubin < 6.0) return 2;
  if (bilirubin < 12.0) return 3;
  return 4;
}

/** SOFA CNS from GCS: 15 → 0; 13–14 → 1; 10–12 → 2; 6–9 → 3; < 6 → 4. */
export function sofaCns(gcs: number): number {
  if (gcs >= 15) return 0;
  if (gcs >= 13) return 1;
  if (gcs >= 10) return 2;
  if (gcs >= 6) return 3;
  return 4;
}

/** SOFA renal from creatinine mg/dL: < 1.2 → 0; 1.2–1.9 → 1; 2.0–3.4 → 2; 3.5–4.9 → 3; ≥ 5.0 → 4 (half-open). */
export function sofaRenalCreatinine(creatinine: number): number {
  if (creatinine < 1.2) return 0;
  if (creatinine < 2.0) return 1;
  if (creatinine < 3.5) return 2;
  if (creatinine < 5.0) return 3;
  return 4;
}

/** SOFA renal from urine output mL/day: < 500 → 3; < 200 → 4; otherwise 0 (the urine column scores only 3 and 4). */
export function sofaRenalUrine(mlPerDay: number): number {
  if (mlPerDay < 200) return 4;
  if (mlPerDay < 500) return 3;
  return 0;
}

export interface CardiovascularInput {
  /** Lowest MAP, mmHg. */
  map?: number | undefined;
  /** Catecholamine rates held ≥ 1 h, µg/kg/min. */
  dopamine?: number | undefined;
  dobutamine?: number | undefined;
  epinephrine?: number | undefined;
  norepinephrine?: number | undefined;
}

/**
 * SOFA cardiovascular. MAP ≥ 70 → 0; MAP < 70 → 1; dopamine ≤ 5 or dobutamine (any dose) → 2;
 * dopamine > 5 or epinephrine ≤ 0.1 or norepinephrine ≤ 0.1 → 3; dopamine > 15 or
 * epinephrine > 0.1 or norepinephrine > 0.1 → 4. Undefined when nothing is known.
 */
export function sofaCardiovascular(c: CardiovascularInput): number | undefined {
  let points: number | undefined = c.map === undefined ? undefined : c.map < 70 ? 1 : 0;
  const raise = (p: number): void => {
    points = points === undefined ? p : Math.max(points, p);
  };
  const dopa = c.dopamine ?? 0;
  if (dopa > 15) raise(4);
  else if (dopa > 5) raise(3);
  else if (dopa > 0) raise(2);
  if ((c.dobutamine ?? 0) > 0) raise(2);
  for (const v of [c.epinephrine ?? 0, c.norepinephrine ?? 0]) {
    if (v > 0.1) raise(4);
    else if (v > 0) raise(3);
  }
  return points;
}

// --- Results --------------------------------------------------------------------------------

export type SofaOrgan = 'respiration' | 'coagulation' | 'liver' | 'cardiovascular' | 'cns' | 'renal';
export const SOFA_ORGANS: readonly SofaOrgan[] = ['respiration', 'coagulation', 'liver', 'cardiovascular', 'cns', 'renal'];

/** The worst value that decided a part, and where it was charted. */
export interface Evidence {
  key: string;
  value: number;
  /** Row time, ms since the epoch. */
  time: number;
}

export interface ScoreResult<Part extends string> {
  /** Sum of the parts that could be scored. */
  score: number;
  /** Points per part; absent when the part could not be scored. */
  parts: Partial<Record<Part, number>>;
  /** Measure keys (or `respiratory_support`) whose values are needed but not charted in the window. */
  missing: string[];
  /** True when every part was scored. */
  complete: boolean;
  /** What decided each part. */
  evidence: Partial<Record<Part, Evidence>>;
  /** Plain-language remarks (decisions applied, drugs not yet scored...). */
  notes: string[];
}

export type SofaResult = ScoreResult<SofaOrgan>;
export type QsofaPart = 'respiratory_rate' | 'systolic_pressure' | 'mentation';
export type QsofaResult = ScoreResult<QsofaPart> & {
  /** ≥ 2 points; undefined when missing parts could change the answer. */ positive: boolean | undefined;
};
export type SirsPart = 'temperature' | 'heart_rate' | 'respiratory' | 'white_cells';
export type SirsResult = ScoreResult<SirsPart> & { criteria: SirsCriteria; positive: boolean | undefined };

export interface RowScores {
  sofa: SofaResult;
  qsofa: QsofaResult;
  sirs: SirsResult;
}

// --- Window scanning --------------------------------------------------------------------------

interface Extreme {
  value: number;
  time: number;
}

/** Keys whose lowest and highest values in the window the scores read. */
const WINDOW_KEYS = ['pf_ratio', 'platelets', 'map', 'gcs', 'sbp', 'temp', 'wbc', 'paco2', 'rr', 'hr', 'bilirubin', 'creatinine'] as const;

/** First row index of the window ending at row i. */
export function windowStart(times: readonly number[], i: number, windowHours = DEFAULT_WINDOW_HOURS): number {
  const from = times[i]! - windowHours * HOUR_MS;
  let j = i;
  while (j > 0 && times[j - 1]! > from) j--;
  return j;
}

const CATECHOLAMINES = ['dopamine', 'dobutamine', 'epinephrine', 'norepinephrine'] as const;
type Catecholamine = (typeof CATECHOLAMINES)[number];

/**
 * The highest rate of a drug held for at least `minHours` without a break, in a run that reaches
 * into the window `(from, now]`. Returns `running` = a rate is charted in the window but has not
 * yet been held long enough.
 */
export function sustainedRate(
  input: ScoreInput,
  key: string,
  i: number,
  windowHours = DEFAULT_WINDOW_HOURS,
  minHours = 1,
): { rate: number | undefined; runningShort: number | undefined } {
  const now = input.times[i]!;
  const from = now - windowHours * HOUR_MS;
  const lookFrom = from - minHours * HOUR_MS;
  const col = input.column(key);
  // Step function of the rate from lookFrom on: segment k runs from ts[k] to ts[k+1] (or now).
  const idx: number[] = [];
  let j = input.lastIndexAtOrBefore(key, i);
  while (j >= 0 && input.times[j]! > lookFrom) {
    idx.push(j);
    j = input.lastIndexAtOrBefore(key, j - 1);
  }
  const ts: number[] = [];
  const rs: number[] = [];
  if (j >= 0) {
    ts.push(lookFrom);
    rs.push(col[j]!);
  }
  for (let k = idx.length - 1; k >= 0; k--) {
    ts.push(input.times[idx[k]!]!);
    rs.push(col[idx[k]!]!);
  }
  const n = ts.length;
  if (n === 0) return { rate: undefined, runningShort: undefined };
  const end = (k: number): number => (k + 1 < n ? ts[k + 1]! : now);
  const minMs = minHours * HOUR_MS;
  // The best span of exactly minHours starts at a segment start or ends at a segment end (a step
  // function's lowest value over a sliding span changes only there); it must end inside the
  // window (after `from`) and stay within the charted time.
  let best = 0;
  for (let k = 0; k < n; k++) {
    // Span starting at segment k: segments k, k+1... until the span ends.
    const a = ts[k]!;
    const b = a + minMs;
    if (b > from && b <= now) {
      let m = rs[k]!;
      for (let q = k + 1; q < n && ts[q]! < b; q++) m = Math.min(m, rs[q]!);
      if (m > best) best = m;
    }
    // Span ending where segment k ends: segments k, k−1... back to its start.
    const e = end(k);
    const s0 = e - minMs;
    if (e > from && s0 >= ts[0]!) {
      let m = rs[k]!;
      for (let q = k - 1; q >= 0 && end(q) > s0; q--) m = Math.min(m, rs[q]!);
      if (m > best) best = m;
    }
  }
  if (best > 0) return { rate: best, runningShort: undefined };
  let shortRate: number | undefined;
  for (let k = 0; k < n; k++) if (end(k) > from && rs[k]! > 0) shortRate = Math.max(shortRate ?? 0, rs[k]!);
  if (rs[n - 1]! > 0) shortRate = rs[n - 1]!;
  return { rate: undefined, runningShort: shortRate };
}

/** Lowest and highest value of each window key in the window ending at a row. */
export interface WindowExtremes {
  /** First row of the window. */
  start: number;
  lo: Record<string, Extreme | undefined>;
  hi: Record<string, Extreme | undefined>;
}

/**
 * The window extremes by a direct scan: O(window) per row. Among equal values the latest row is
 * the evidence (as in WindowScanner).
 */
export function scanWindow(input: ScoreInput, i: number, windowHours = DEFAULT_WINDOW_HOURS): WindowExtremes {
  const start = windowStart(input.times, i, windowHours);
  const lo: Record<string, Extreme | undefined> = {};
  const hi: Record<string, Extreme | undefined> = {};
  for (const k of WINDOW_KEYS) {
    const col = input.column(k);
    let minJ = -1;
    let maxJ = -1;
    for (let j = start; j <= i; j++) {
      const v = col[j]!;
      if (v !== v) continue; // NaN: not charted
      if (minJ < 0 || v <= col[minJ]!) minJ = j;
      if (maxJ < 0 || v >= col[maxJ]!) maxJ = j;
    }
    if (minJ >= 0) {
      lo[k] = { value: col[minJ]!, time: input.times[minJ]! };
      hi[k] = { value: col[maxJ]!, time: input.times[maxJ]! };
    }
  }
  return { start, lo, hi };
}

/**
 * Window extremes for rows asked in increasing order, with monotonic queues: O(1) amortised per
 * row and key instead of O(window). Gives the same answer as scanWindow (tested).
 */
export class WindowScanner {
  private next = -1;
  private start = 0;
  private readonly minQ = new Map<string, { q: Int32Array; head: number; tail: number }>();
  private readonly maxQ = new Map<string, { q: Int32Array; head: number; tail: number }>();

  constructor(
    private readonly input: ScoreInput,
    private readonly windowHours = DEFAULT_WINDOW_HOURS,
  ) {}

  at(i: number): WindowExtremes {
    const times = this.input.times;
    if (this.next < 0 || i < this.next) this.reset(windowStart(times, i, this.windowHours));
    for (let j = Math.max(this.next, this.start); j <= i; j++) this.push(j);
    this.next = i + 1;
    const from = times[i]! - this.windowHours * HOUR_MS;
    while (this.start < i && times[this.start]! <= from) this.start++;
    const lo: Record<string, Extreme | undefined> = {};
    const hi: Record<string, Extreme | undefined> = {};
    for (const k of WINDOW_KEYS) {
      const col = this.input.column(k);
      const mn = this.minQ.get(k)!;
      const mx = this.maxQ.get(k)!;
      while (mn.head < mn.tail && mn.q[mn.head]! < this.start) mn.head++;
      while (mx.head < mx.tail && mx.q[mx.head]! < this.start) mx.head++;
      if (mn.head < mn.tail) {
        const a = mn.q[mn.head]!;
        const b = mx.q[mx.head]!;
        lo[k] = { value: col[a]!, time: times[a]! };
        hi[k] = { value: col[b]!, time: times[b]! };
      }
    }
    return { start: this.start, lo, hi };
  }

  private reset(start: number): void {
    const n = this.input.times.length;
    this.start = start;
    this.next = start;
    for (const k of WINDOW_KEYS) {
      this.minQ.set(k, { q: new Int32Array(n), head: 0, tail: 0 });
      this.maxQ.set(k, { q: new Int32Array(n), head: 0, tail: 0 });
    }
  }

  private push(j: number): void {
    for (const k of WINDOW_KEYS) {
      const col = this.input.column(k);
      const v = col[j]!;
      if (v !== v) continue;
      // Keep the latest row among equal values, as scanWindow does.
      const mn = this.minQ.get(k)!;
      while (mn.tail > mn.head && col[mn.q[mn.tail - 1]!]! >= v) mn.tail--;
      mn.q[mn.tail++] = j;
      const mx = this.maxQ.get(k)!;
      while (mx.tail > mx.head && col[mx.q[mx.tail - 1]!]! <= v) mx.tail--;
      mx.q[mx.tail++] = j;
    }
  }
}

function fmt(x: number): string {
  return String(Number(x.toPrecision(4)));
}

/**
 * All three scores at row i. One pass over the window for the charted extremes, plus the
 * catecholamine runs.
 */
export function scoresAt(input: ScoreInput, i: number, options: ScoreOptions = {}, scanner?: WindowScanner): RowScores {
  const windowHours = options.windowHours ?? DEFAULT_WINDOW_HOURS;
  const sirsCriteria = options.sirsCriteria ?? 'bone1992';
  const { start, lo, hi } = scanner ? scanner.at(i) : scanWindow(input, i, windowHours);

  const uoCol = input.column('uo_ml');
  let urineTotal = 0;
  let urineEveryRow = true;
  for (let j = start; j <= i; j++) {
    const uo = uoCol[j]!;
    if (uo !== uo) urineEveryRow = false;
    else urineTotal += uo;
  }

  // --- SOFA ---
  const sofa: SofaResult = { score: 0, parts: {}, missing: [], complete: false, evidence: {}, notes: [] };
  const setPart = (organ: SofaOrgan, points: number, ev?: Evidence): void => {
    sofa.parts[organ] = points;
    if (ev) sofa.evidence[organ] = ev;
  };
  const pf = lo['pf_ratio'];
  if (pf) {
    const r = sofaRespiration(pf.value, options.respiratorySupport);
    setPart('respiration', r.points, { key: 'pf_ratio', ...pf });
    if (r.supportUnknown) {
      sofa.missing.push('respiratory_support');
      sofa.notes.push(
        `P/F ${fmt(pf.value)} is below 200: 3 or 4 points need respiratory support, which is not charted, so respiration scores 2.`,
      );
    } else if (pf.value < 200 && options.respiratorySupport === false) {
      sofa.notes.push(`P/F ${fmt(pf.value)} is below 200 without respiratory support: respiration scores 2.`);
    }
  } else sofa.missing.push('pf_ratio');

  const plt = lo['platelets'];
  if (plt) setPart('coagulation', sofaCoagulation(plt.value), { key: 'platelets', ...plt });
  else sofa.missing.push('platelets');

  const bili = hi['bilirubin'];
  if (bili) setPart('liver', sofaLiver(bili.value), { key: 'bilirubin', ...bili });
  else sofa.missing.push('bilirubin');

  const minHours = options.catecholamineMinHours ?? 1;
  const held: Partial<Record<Catecholamine, number>> = {};
  for (const drug of CATECHOLAMINES) {
    const s = sustainedRate(input, drug, i, windowHours, minHours);
    if (s.rate !== undefined) held[drug] = s.rate;
    else if (s.runningShort !== undefined)
      sofa.notes.push(`${drug} ${fmt(s.runningShort)} µg/kg/min has run less than ${minHours} h: not scored yet.`);
  }
  const mapLow = lo['map'];
  const cv = sofaCardiovascular({ map: mapLow?.value, ...held });
  if (cv === undefined) sofa.missing.push('map');
  else {
    const drugEntries = Object.entries(held) as [Catecholamine, number][];
    const drugOnly = sofaCardiovascular({ ...held }) ?? 0;
    if (drugOnly >= cv && drugEntries.length > 0) {
      const [k, v] = drugEntries.sort((a, b) => b[1] - a[1])[0]!;
      setPart('cardiovascular', cv, { key: k, value: v, time: input.times[i]! });
    } else setPart('cardiovascular', cv, mapLow ? { key: 'map', ...mapLow } : undefined);
    if (held.dopamine === 5)
      sofa.notes.push('Dopamine exactly 5 µg/kg/min scores 2 (Vincent 1996 "≤ 5"; Sepsis-3 leaves 5.0 between bands).');
  }

  const gcs = lo['gcs'];
  if (gcs) setPart('cns', sofaCns(gcs.value), { key: 'gcs', ...gcs });
  else sofa.missing.push('gcs');

  const creat = hi['creatinine'];
  let urinePerDay: number | undefined;
  if (urineEveryRow && start > 0) {
    const span = input.times[i]! - input.times[start - 1]!;
    if (span >= 24 * HOUR_MS) urinePerDay = (urineTotal * 24 * HOUR_MS) / span;
  }
  const creatPts = creat ? sofaRenalCreatinine(creat.value) : undefined;
  const urinePts = urinePerDay !== undefined ? sofaRenalUrine(urinePerDay) : undefined;
  if (creatPts === undefined && urinePts === undefined) {
    sofa.missing.push('creatinine');
    sofa.notes.push('Renal: no creatinine, and urine output is not charted for a full 24 h.');
  } else if (urinePts !== undefined && (creatPts === undefined || urinePts > creatPts)) {
    setPart('renal', urinePts, { key: 'uo_ml', value: urinePerDay!, time: input.times[i]! });
    if (creatPts === undefined && urinePts < 4) {
      // Creatinine could still raise the part: say so rather than assume it is normal.
      sofa.missing.push('creatinine');
      sofa.notes.push('Renal scored from urine output only: no creatinine in the window.');
    }
  } else {
    setPart('renal', creatPts!, creat ? { key: 'creatinine', ...creat } : undefined);
    if (urinePts === undefined && creatPts! < 4)
      sofa.notes.push('Renal scored from creatinine only: urine output is not charted for a full 24 h.');
  }
  sofa.score = SOFA_ORGANS.reduce((s, o) => s + (sofa.parts[o] ?? 0), 0);
  sofa.complete = sofa.missing.length === 0;

  // --- qSOFA (Sepsis-3: RR ≥ 22, SBP ≤ 100, altered mentation = GCS < 15) ---
  const q: QsofaResult = { score: 0, parts: {}, missing: [], complete: false, evidence: {}, notes: [], positive: undefined };
  const rrHi = hi['rr'];
  if (rrHi) {
    q.parts.respiratory_rate = rrHi.value >= 22 ? 1 : 0;
    q.evidence.respiratory_rate = { key: 'rr', ...rrHi };
  } else q.missing.push('rr');
  const sbpLo = lo['sbp'];
  if (sbpLo) {
    q.parts.systolic_pressure = sbpLo.value <= 100 ? 1 : 0;
    q.evidence.systolic_pressure = { key: 'sbp', ...sbpLo };
  } else q.missing.push('sbp');
  if (gcs) {
    q.parts.mentation = gcs.value < 15 ? 1 : 0;
    q.evidence.mentation = { key: 'gcs', ...gcs };
  } else q.missing.push('gcs');
  finishCount(q, 2);

  // --- SIRS ---
  const s: SirsResult = {
    score: 0,
    parts: {},
    missing: [],
    complete: false,
    evidence: {},
    notes: [],
    positive: undefined,
    criteria: sirsCriteria,
  };
  const tempHigh = sirsCriteria === 'sep1' ? 38.3 : 38.0;
  const tHi = hi['temp'];
  const tLo = lo['temp'];
  if (tHi && tLo) {
    const met = tHi.value > tempHigh || tLo.value < 36.0;
    s.parts.temperature = met ? 1 : 0;
    s.evidence.temperature = { key: 'temp', ...(tHi.value > tempHigh ? tHi : tLo.value < 36.0 ? tLo : tHi) };
  } else s.missing.push('temp');
  const hrHi = hi['hr'];
  if (hrHi) {
    s.parts.heart_rate = hrHi.value > 90 ? 1 : 0;
    s.evidence.heart_rate = { key: 'hr', ...hrHi };
  } else s.missing.push('hr');
  const pacoLo = sirsCriteria === 'bone1992' ? lo['paco2'] : undefined;
  if (rrHi || pacoLo) {
    const rrMet = rrHi !== undefined && rrHi.value > 20;
    const pacoMet = pacoLo !== undefined && pacoLo.value < 32;
    s.parts.respiratory = rrMet || pacoMet ? 1 : 0;
    s.evidence.respiratory = rrHi && (rrMet || !pacoMet) ? { key: 'rr', ...rrHi } : { key: 'paco2', ...pacoLo! };
  } else s.missing.push('rr');
  const wHi = hi['wbc'];
  const wLo = lo['wbc'];
  if (wHi && wLo) {
    const met = wHi.value > 12 || wLo.value < 4;
    s.parts.white_cells = met ? 1 : 0;
    s.evidence.white_cells = { key: 'wbc', ...(wHi.value > 12 ? wHi : wLo.value < 4 ? wLo : wHi) };
  } else s.missing.push('wbc');
  if (sirsCriteria === 'sep1')
    s.notes.push('SEP-1 SIRS: temperature > 38.3 °C or < 36.0 °C; respiratory rate > 20 (no PaCO₂ alternative).');
  else s.notes.push('SIRS (Bone 1992): temperature > 38.0 °C or < 36.0 °C; respiratory rate > 20 or PaCO₂ < 32 mmHg.');
  s.notes.push('Band forms are not charted; the white-cell criterion uses the count only.');
  finishCount(s, 2);

  return { sofa, qsofa: q, sirs: s };
}

function finishCount<P extends string>(r: ScoreResult<P> & { positive: boolean | undefined }, threshold: number): void {
  r.score = (Object.values(r.parts) as number[]).reduce((a, b) => a + b, 0);
  r.complete = r.missing.length === 0;
  if (r.score >= threshold) r.positive = true;
  else if (r.score + r.missing.length < threshold) r.positive = false;
  else r.positive = undefined;
}
