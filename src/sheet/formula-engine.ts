/**
 * The restricted formula engine: the only way Tidemark code may use mathjs (>= 15.2.0).
 *
 * Two layers of defence (reference/reliability-security-performance.md §3):
 *
 * 1. A private mathjs instance set up as mathjs's security guidance says
 *    (docs/expressions/security.md): the parser is captured first, then `import`, `createUnit`,
 *    `reviver`, `evaluate`, `parse`, `simplify`, `derivative` and `resolve` (plus `compile`,
 *    `parser`, `chain` and `help`) are overridden with functions that throw. The instance is
 *    created with `predictable: true` so `sqrt(-1)` gives NaN rather than a complex number.
 * 2. An allow-list walk over the parsed tree. A formula may contain only
 *    - numbers and `true`/`false`;
 *    - names Tidemark knows: measure keys (`map`, `lactate`...), built-in derived keys
 *      (`fluid_ml_kg`, `pf_ratio`...), score keys (`sofa`, `qsofa`, `sirs`), the worksheet facts
 *      below, and (for user columns and goals) the keys of the worksheet's own derived columns;
 *    - the operators `+ - * / ^ %` (and `mod`), unary `-`/`+`, comparisons `< <= > >= == !=`,
 *      `and`, `or`, `not`, `xor`, the conditional `a ? b : c`, parentheses, and `??` when its
 *      left side is a name or a helper call (`uo_ml ?? 0`);
 *    - the functions `abs min max round floor ceil sqrt log exp pow` and the row helpers below.
 *    Everything else is refused before anything runs: assignment, function definition,
 *    property or index access (`a.b`, `a[1]`, `a?.b`), matrices, objects, ranges, several
 *    statements, strings, units, `to`/`in` conversions, bitwise operators, factorial, transpose.
 *    A formula longer than {@link MAX_FORMULA_LENGTH} characters, with more than
 *    {@link MAX_FORMULA_NODES} parts, or nested deeper than {@link MAX_FORMULA_DEPTH}, is
 *    refused. The grammar has no loops, so evaluating a formula costs at most one step per part.
 *
 * Each formula is parsed, checked and compiled once ({@link compileFormula}); the compiled
 * formula is then evaluated per row against a `Map` scope that resolves names through a
 * {@link Resolver}. Names are renamed to private symbols before compiling, so a measure key such
 * as `map` can never reach the mathjs function of the same name.
 *
 * Row helpers (for developers; the app lists them with {@link HELPERS}):
 * | helper | value at a row |
 * |---|---|
 * | `prev(key)` | the last value of `key` charted (or derived) in an earlier row |
 * | `first(key)` | the first value of `key` in this row or an earlier one |
 * | `at_t0(key)` | the value of `key` at time zero, or the last one before it |
 * | `running_sum(key)` | the sum of `key` over rows from time zero (or the first row when time zero is not set) to this row |
 * | `has(key)` | `true` when `key` has a value at this row, else `false` (never missing) |
 * | `hours_since_prev()` | hours since the previous row |
 * | `hours_since_t0()` | hours since time zero (negative before it) |
 * Helpers take a measure key, a built-in derived key or a score key, not a user column
 * (this keeps user columns row-local, see derived.ts for the recompute rules).
 *
 * Worksheet facts: `weight` (kg, actual), `dosing_weight` (kg, actual or Devine ideal as the
 * worksheet says), `height` (cm), `ibw` (Devine ideal body weight, kg), `baseline_sbp` (mmHg).
 *
 * Missing values: when a formula needs a name that has no value at a row, the result at that
 * row is "missing" (with the names it needs), never a guess. Use `has(key)` or `key ?? 0` to
 * supply a default yourself.
 *
 * Mark measures (cultures drawn...) and text measures (antibiotic, note) read as 1 when the cell
 * is filled; text itself never enters a formula.
 *
 * Pure module: no DOM, no wall clock, no network.
 */
import {
  absDependencies,
  addDependencies,
  andDependencies,
  ceilDependencies,
  create,
  divideDependencies,
  equalDependencies,
  expDependencies,
  floorDependencies,
  largerDependencies,
  largerEqDependencies,
  logDependencies,
  maxDependencies,
  maxTransformDependencies,
  minDependencies,
  minTransformDependencies,
  modDependencies,
  multiplyDependencies,
  notDependencies,
  orDependencies,
  parseDependencies,
  powDependencies,
  roundDependencies,
  smallerDependencies,
  smallerEqDependencies,
  sqrtDependencies,
  subtractDependencies,
  unaryMinusDependencies,
  unaryPlusDependencies,
  unequalDependencies,
  xorDependencies,
  type FactoryFunctionMap,
  type MathNode,
} from 'mathjs/number';

import { MEASURES } from './measures.js';
import { DERIVED_DEFS } from './derived.js';
import { SCORE_KEYS } from './scores.js';

/** Longest formula accepted, in characters (the DerivedColumn schema allows the same). */
export const MAX_FORMULA_LENGTH = 500;
/** Most parse-tree parts (numbers, names, operators, calls) a formula may have. */
export const MAX_FORMULA_NODES = 250;
/** Deepest nesting of parts. */
export const MAX_FORMULA_DEPTH = 100;
/** Most arguments to one function call. */
export const MAX_FUNCTION_ARGS = 20;

// --- Layer 1: the restricted mathjs instance ------------------------------------------------

/**
 * Only what formulas can reach, from mathjs's number-only build: the parser (whose nodes
 * compile) and the functions behind the allowed operators and functions. `create(all)` would
 * bring every mathjs function and data type (BigNumber, Complex, Fraction, Unit, matrices) for
 * nothing — the allow-list refuses every other name before anything runs — at the price of
 * about 135 KB more gzipped JavaScript and a slower start. Formulas compute on plain numbers
 * anyway (`number: 'number'`). The lazy `and`, `or` and `??` of the expression language are added
 * below, since the number-only build has no transforms for them.
 */
const FACTORIES = defined({
  parseDependencies,
  addDependencies,
  subtractDependencies,
  multiplyDependencies,
  divideDependencies,
  powDependencies,
  modDependencies,
  unaryMinusDependencies,
  unaryPlusDependencies,
  smallerDependencies,
  smallerEqDependencies,
  largerDependencies,
  largerEqDependencies,
  equalDependencies,
  unequalDependencies,
  andDependencies,
  orDependencies,
  notDependencies,
  xorDependencies,
  absDependencies,
  minDependencies,
  minTransformDependencies,
  maxDependencies,
  maxTransformDependencies,
  roundDependencies,
  floorDependencies,
  ceilDependencies,
  sqrtDependencies,
  logDependencies,
  expDependencies,
});
const math = create(FACTORIES, { predictable: true });

/** The factories, each checked to exist (mathjs types them as possibly undefined). */
function defined(map: Record<string, FactoryFunctionMap | undefined>): FactoryFunctionMap {
  const out: FactoryFunctionMap = {};
  for (const [name, factories] of Object.entries(map)) {
    if (!factories) throw new Error(`mathjs has no ${name}`);
    out[name] = factories;
  }
  return out;
}
/** Captured before the override; used only on text that is then walked by the allow-list. */
const parseExpression = math.parse.bind(math);
const SymbolNodeCtor = math.SymbolNode;
const ConditionalNodeCtor = math.ConditionalNode;
/**
 * Unit symbols people may type into a formula ("5 cm", "lactate mg"), named in the refusal so
 * it says why. The number-only build has no units to ask; any other unknown name is refused too,
 * only with the plainer message.
 */
const UNIT_WORDS: ReadonlySet<string> = new Set([
  'm',
  'cm',
  'mm',
  'km',
  'inch',
  'in',
  'ft',
  'kg',
  'g',
  'mg',
  'mcg',
  'ug',
  'lb',
  'lbs',
  'l',
  'L',
  'ml',
  'mL',
  'dl',
  'dL',
  'cl',
  'h',
  'hour',
  'hours',
  'min',
  'minute',
  'minutes',
  's',
  'sec',
  'second',
  'seconds',
  'day',
  'days',
  'mol',
  'mmol',
  'umol',
  'mEq',
  'meq',
  'mmHg',
  'cmH2O',
  'kPa',
  'Pa',
  'bar',
  'atm',
  'degC',
  'degF',
  'celsius',
  'fahrenheit',
  'K',
  'U',
  'IU',
  'units',
  'percent',
  'bpm',
]);
const isValuelessUnit = (name: string): boolean => UNIT_WORDS.has(name);

/** Compiled child nodes of the lazy operators below, compiled once per node. */
const compiledArgs = new WeakMap<MathNode, { evaluate(scope: unknown): unknown }>();
function evalArg(node: MathNode, scope: unknown): unknown {
  let code = compiledArgs.get(node);
  if (!code) {
    code = node.compile();
    compiledArgs.set(node, code);
  }
  return code.evaluate(scope);
}
type RawArgsFunction = ((args: MathNode[], math: unknown, scope: unknown) => unknown) & { rawArgs: true };
function rawArgs(fn: (args: MathNode[], scope: unknown) => unknown): RawArgsFunction {
  return Object.assign((args: MathNode[], _math: unknown, scope: unknown) => fn(args, scope), { rawArgs: true as const });
}
/**
 * `and`, `or` and `??` read their right side only when the left does not decide, as in mathjs's
 * full build (lazy since 12.2.0), so `has(lactate) and lactate > 2` is false, not missing.
 */
math.import(
  {
    and: rawArgs(([a, b], scope) => Boolean(evalArg(a!, scope)) && Boolean(evalArg(b!, scope))),
    or: rawArgs(([a, b], scope) => Boolean(evalArg(a!, scope)) || Boolean(evalArg(b!, scope))),
    nullish: rawArgs(([a, b], scope) => evalArg(a!, scope) ?? evalArg(b!, scope)),
  },
  { override: true },
);

/**
 * Functions mathjs's security notes name as dangerous (import, createUnit, reviver: change the
 * instance or build objects; evaluate, parse, simplify, derivative, resolve: turn text into
 * trees), plus a few more entry points we never need. All are replaced by throwing stubs.
 */
export const DISABLED_MATH_FUNCTIONS: readonly string[] = [
  'import',
  'createUnit',
  'reviver',
  'evaluate',
  'parse',
  'simplify',
  'derivative',
  'resolve',
  'compile',
  'parser',
  'chain',
  'help',
];

/**
 * `pow` (and the ^ operator) on plain numbers. mathjs's own `pow` searches for a real root when
 * a negative number is raised to a fraction (pow(-8, 1/3) = -2), which was measured here at up to
 * 40 ms per call for some doubles: too slow to run per row. Plain Math.pow gives NaN there, which
 * the engine reports as "not a number".
 */
math.import({ pow: math.typed('pow', { 'number, number': (a: number, b: number) => Math.pow(a, b) }) }, { override: true });

const stubs: Record<string, () => never> = {};
for (const name of DISABLED_MATH_FUNCTIONS) {
  stubs[name] = () => {
    throw new Error(`Function ${name} is disabled in Tidemark formulas`);
  };
}
math.import(stubs, { override: true });

/**
 * True when calling `name` on the restricted instance throws the "disabled" error. For tests of
 * the first defence layer; it never evaluates text.
 */
export function isDisabledInEngine(name: string): boolean {
  const fn: unknown = (math as unknown as Record<string, unknown>)[name];
  if (typeof fn !== 'function') return false;
  try {
    (fn as (...a: unknown[]) => unknown).call(math, '1');
    return false;
  } catch (e) {
    return e instanceof Error && e.message.includes('is disabled');
  }
}

// --- Vocabulary -------------------------------------------------------------------------------

/** Functions a formula may call, with the number of arguments each takes. */
export const ALLOWED_FUNCTIONS: Readonly<Record<string, readonly [number, number]>> = {
  abs: [1, 1],
  min: [1, MAX_FUNCTION_ARGS],
  max: [1, MAX_FUNCTION_ARGS],
  round: [1, 2],
  floor: [1, 2],
  ceil: [1, 2],
  sqrt: [1, 1],
  log: [1, 2],
  exp: [1, 1],
  pow: [2, 2],
};

export type HelperName = 'prev' | 'first' | 'at_t0' | 'running_sum' | 'has' | 'hours_since_prev' | 'hours_since_t0';

export interface HelperDef {
  name: HelperName;
  /** How it is written. */
  signature: string;
  description: string;
  /** Takes one key argument, or none. */
  takesKey: boolean;
}

/** The row helpers, for the app's formula help. */
export const HELPERS: readonly HelperDef[] = [
  { name: 'prev', signature: 'prev(key)', description: 'the last value of key in an earlier row', takesKey: true },
  { name: 'first', signature: 'first(key)', description: 'the first value of key, in this row or an earlier one', takesKey: true },
  { name: 'at_t0', signature: 'at_t0(key)', description: 'the value of key at time zero, or the last one before it', takesKey: true },
  {
    name: 'running_sum',
    signature: 'running_sum(key)',
    description: 'the sum of key from time zero (or the first row) to this row',
    takesKey: true,
  },
  { name: 'has', signature: 'has(key)', description: 'true when key has a value in this row', takesKey: true },
  { name: 'hours_since_prev', signature: 'hours_since_prev()', description: 'hours since the previous row', takesKey: false },
  { name: 'hours_since_t0', signature: 'hours_since_t0()', description: 'hours since time zero (negative before it)', takesKey: false },
];
const HELPER_BY_NAME: ReadonlyMap<string, HelperDef> = new Map(HELPERS.map((h) => [h.name, h]));

export type FactName = 'weight' | 'dosing_weight' | 'height' | 'ibw' | 'baseline_sbp';

/** Worksheet facts a formula may use, with their units. */
export const FACTS: Readonly<Record<FactName, string>> = {
  weight: 'actual body weight, kg',
  dosing_weight: 'dosing weight, kg (actual, or Devine ideal weight when the worksheet says so)',
  height: 'height, cm',
  ibw: 'Devine ideal body weight, kg',
  baseline_sbp: 'baseline systolic pressure, mmHg',
};

/** Own-property test: `"constructor" in {}` is true, so never use `in` on these tables. */
function own(table: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(table, key);
}

const OPERATORS: ReadonlySet<string> = new Set([
  'add',
  'subtract',
  'multiply',
  'divide',
  'pow',
  'mod',
  'unaryMinus',
  'unaryPlus',
  'smaller',
  'smallerEq',
  'larger',
  'largerEq',
  'equal',
  'unequal',
  'and',
  'or',
  'not',
  'xor',
  'nullish',
]);

/** Plain words for operators that are refused. */
const REFUSED_OPERATORS: Readonly<Record<string, string>> = {
  to: 'unit conversion ("to"/"in") is not allowed; values are already in the units shown in the column headers',
  factorial: 'the factorial "!" is not allowed',
  ctranspose: "the transpose mark ' is not allowed (and text in quotes is not allowed either)",
  transpose: "the transpose mark ' is not allowed",
  bitAnd: 'the bitwise operator & is not allowed; use "and"',
  bitOr: 'the bitwise operator | is not allowed; use "or"',
  bitXor: 'the bitwise operator ^| is not allowed; use "xor"',
  bitNot: 'the bitwise operator ~ is not allowed; use "not"',
  leftShift: 'the shift operator << is not allowed',
  rightArithShift: 'the shift operator >> is not allowed',
  rightLogShift: 'the shift operator >>> is not allowed',
  dotMultiply: 'element-wise operators (.*) are not allowed; use *',
  dotDivide: 'element-wise operators (./) are not allowed; use /',
  dotPow: 'element-wise operators (.^) are not allowed; use ^',
};

// The known names, computed on first use (derived.ts imports this module and the other way round).
let knownCache: { keys: ReadonlySet<string>; helperKeys: ReadonlySet<string> } | undefined;
function known(): { keys: ReadonlySet<string>; helperKeys: ReadonlySet<string> } {
  if (!knownCache) {
    const keys = new Set<string>([...MEASURES.keys(), ...DERIVED_DEFS.map((d) => d.key), ...SCORE_KEYS]);
    knownCache = { keys, helperKeys: keys };
  }
  return knownCache;
}

/**
 * Names a user may not give to a derived column: they would hide a measure, a derived key, a
 * score, a fact, a helper or a function.
 */
export function reservedNameReason(name: string): string | undefined {
  if (MEASURES.has(name)) return `"${name}" is already a charted measure`;
  if (DERIVED_DEFS.some((d) => d.key === name)) return `"${name}" is already a built-in derived measure`;
  if ((SCORE_KEYS as readonly string[]).includes(name)) return `"${name}" is already a score`;
  if (own(FACTS, name)) return `"${name}" is a worksheet fact`;
  if (HELPER_BY_NAME.has(name)) return `"${name}" is a formula helper`;
  if (own(ALLOWED_FUNCTIONS, name) || own(OPERATOR_WORDS, name)) return `"${name}" is a formula function or word`;
  return undefined;
}
const OPERATOR_WORDS: Readonly<Record<string, true>> = {
  and: true,
  or: true,
  not: true,
  xor: true,
  mod: true,
  to: true,
  in: true,
  true: true,
  false: true,
  null: true,
  undefined: true,
  end: true,
};

// --- References and the compiled formula ----------------------------------------------------

/** Something a formula reads: a value at this row, a fact, or a helper over a key. */
export type Ref =
  | { kind: 'value'; key: string }
  | { kind: 'fact'; fact: FactName }
  | { kind: 'prev' | 'first' | 'at_t0' | 'running_sum'; key: string }
  | { kind: 'hours_since_prev' | 'hours_since_t0' };

/** How a formula's references get their values at one row. Return undefined when missing. */
export type Resolver = (ref: Ref) => number | undefined;

/** How a reference is written in a formula, for messages ("prev(lactate)"). */
export function refText(ref: Ref): string {
  switch (ref.kind) {
    case 'value':
      return ref.key;
    case 'fact':
      return ref.fact;
    case 'hours_since_prev':
    case 'hours_since_t0':
      return `${ref.kind}()`;
    default:
      return `${ref.kind}(${ref.key})`;
  }
}

export type EvalResult =
  | { ok: true; value: number | boolean }
  | { ok: false; missing: string[]; error?: undefined }
  | { ok: false; error: string; missing?: undefined };

export interface CompiledFormula {
  /** The text as typed. */
  readonly text: string;
  /** Every reference, in order of first appearance. */
  readonly refs: readonly Ref[];
  /** Keys read at the row itself (measure, derived, score or user-column keys). */
  readonly rowKeys: ReadonlySet<string>;
  /** Keys read through a helper, by helper. */
  readonly helperKeys: ReadonlyMap<'prev' | 'first' | 'at_t0' | 'running_sum', ReadonlySet<string>>;
  /** Facts read. */
  readonly facts: ReadonlySet<FactName>;
  /** Uses hours_since_prev() or hours_since_t0(). */
  readonly usesTime: boolean;
  /** Evaluates at one row. Never throws. */
  evaluate(resolve: Resolver): EvalResult;
}

export type CompileResult =
  | { ok: true; formula: CompiledFormula }
  | { ok: false; error: string; /** 1-based character number, like mathjs SyntaxError.char. */ position?: number };

export interface CompileOptions {
  /** Extra row-local names allowed (the keys of the worksheet's user derived columns). */
  columns?: Iterable<string>;
}

class MissingValue extends Error {
  constructor(readonly ref: Ref) {
    super(`missing ${refText(ref)}`);
  }
}

/** A Map scope that answers only the formula's private names and resolves them lazily. */
class RowScope extends Map<string, unknown> {
  constructor(
    private readonly table: ReadonlyMap<string, { ref: Ref; presence: boolean }>,
    private readonly resolve: Resolver,
  ) {
    super();
  }
  override has(name: string): boolean {
    return this.table.has(name);
  }
  override get(name: string): unknown {
    const entry = this.table.get(name);
    if (!entry) return undefined;
    const v = this.resolve(entry.ref);
    const present = typeof v === 'number' && !Number.isNaN(v);
    if (entry.presence) return present;
    if (!present) throw new MissingValue(entry.ref);
    return v;
  }
  override set(): this {
    throw new Error('formulas cannot assign');
  }
}

// --- Error positions --------------------------------------------------------------------------

interface Token {
  text: string;
  pos: number;
}

/** Identifiers in the text with their 1-based positions, skipping quoted text. */
function identifiers(text: string): Token[] {
  const out: Token[] = [];
  const re =
    /"(?:[^"\\]|\\.)*"?|'(?:[^'\\]|\\.)*'?|[A-Za-z_$\u00C0-\uFFFF][A-Za-z0-9_$\u00C0-\uFFFF]*|0[xXbBoO][0-9a-fA-F]+|\d*\.?\d+(?:[eE][+-]?\d+)?/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(text)) !== null) {
    const s = m[0];
    if (/^[A-Za-z_$\u00C0-\uFFFF]/.test(s)) out.push({ text: s, pos: m.index + 1 });
  }
  return out;
}

function findIdentifier(text: string, name: string): number | undefined {
  return identifiers(text).find((t) => t.text === name)?.pos;
}

function findFirst(text: string, re: RegExp): number | undefined {
  const m = re.exec(text);
  return m ? m.index + 1 : undefined;
}

// --- Suggestions for misspelt names ---------------------------------------------------------

function distance(a: string, b: string): number {
  const d: number[] = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = d[0]!;
    d[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = d[j]!;
      d[j] = Math.min(d[j]! + 1, d[j - 1]! + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return d[b.length]!;
}

function suggest(name: string, candidates: Iterable<string>): string {
  const lower = name.toLowerCase();
  let best: string | undefined;
  let bestD = 3;
  for (const c of candidates) {
    const dd = c === lower ? 0 : distance(lower, c);
    if (dd < bestD) {
      best = c;
      bestD = dd;
    }
  }
  return best ? ` Did you mean "${best}"?` : '';
}

// --- Compile ---------------------------------------------------------------------------------

class Refusal extends Error {
  constructor(
    message: string,
    readonly position: number | undefined,
  ) {
    super(message);
  }
}

const DANGEROUS_FUNCTIONS: ReadonlySet<string> = new Set([...DISABLED_MATH_FUNCTIONS, 'config', 'typed', 'factory', 'Function', 'eval']);

function plainSyntaxMessage(msg: string): string {
  const core = msg.replace(/\s*\(char \d+\)\s*$/, '');
  const table: [RegExp, string][] = [
    [/^Value expected/, 'a number or a name is missing here'],
    [/^Unexpected end of expression/, 'the formula stops too early (something is missing at the end)'],
    [/^Parenthesis \) expected/, 'a closing parenthesis ")" is missing'],
    [/^Unexpected operator/, 'an operator is out of place'],
    [/^Unexpected part "(.*)"/, 'unexpected "$1" (is an operator such as * missing?)'],
    [/^End of string .* expected/, 'text in quotes is not allowed in formulas'],
    [/^False part of conditional expression expected/, 'a conditional needs both parts: condition ? value if true : value if false'],
    [/^Unexpected type of argument/, 'a value has the wrong type'],
    [/^Invalid left hand side/, 'assignment with "=" is not allowed; use "==" to compare'],
    [/^Syntax error in part "(.*)"/, 'cannot read "$1"'],
  ];
  for (const [re, plain] of table) {
    if (re.test(core)) return core.replace(re, plain);
  }
  return `this cannot be read as a formula (${core})`;
}

function at(position: number | undefined): string {
  return position === undefined ? '' : `At character ${position}: `;
}

interface WalkState {
  text: string;
  names: ReadonlySet<string>;
  helperKeys: ReadonlySet<string>;
  columns: ReadonlySet<string>;
  nodes: number;
}

function refuse(_state: WalkState, message: string, position: number | undefined): never {
  throw new Refusal(`${at(position)}${message}`, position);
}

function checkKeyArgument(state: WalkState, helper: HelperDef, node: MathNode): string {
  if (node.type !== 'SymbolNode') {
    refuse(state, `${helper.name}() takes one key, for example ${helper.name}(lactate).`, findIdentifier(state.text, helper.name));
  }
  const key = (node as unknown as { name: string }).name;
  if (state.columns.has(key)) {
    refuse(
      state,
      `${helper.name}() takes a charted measure, a built-in derived measure or a score, not a user column ("${key}").`,
      findIdentifier(state.text, key),
    );
  }
  if (!state.helperKeys.has(key)) {
    refuse(state, `"${key}" is not a measure Tidemark knows.${suggest(key, state.helperKeys)}`, findIdentifier(state.text, key));
  }
  return key;
}

/** The allow-list walk. Throws Refusal on the first construct that is not allowed. */
function walk(node: MathNode, state: WalkState, depth: number): void {
  state.nodes++;
  if (state.nodes > MAX_FORMULA_NODES) refuse(state, `the formula is too complex (more than ${MAX_FORMULA_NODES} parts).`, undefined);
  if (depth > MAX_FORMULA_DEPTH) refuse(state, `the formula is nested too deeply (more than ${MAX_FORMULA_DEPTH} levels).`, undefined);
  const n = node as unknown as Record<string, unknown>;
  switch (node.type) {
    case 'ConstantNode': {
      const v = n['value'];
      if (typeof v === 'number') {
        if (!Number.isFinite(v)) refuse(state, 'this number is too large.', findFirst(state.text, /\d[\d.]*e\+?\d{3,}/i));
        return;
      }
      if (typeof v === 'boolean') return;
      if (typeof v === 'string') refuse(state, 'text in quotes is not allowed in formulas.', findFirst(state.text, /["']/));
      if (v === undefined && state.text.includes('#'))
        refuse(state, 'comments (#) are not allowed in formulas.', findFirst(state.text, /#/));
      refuse(state, `"${String(v)}" is not allowed in formulas; use numbers.`, findIdentifier(state.text, String(v)));
      break;
    }
    case 'SymbolNode': {
      const name = n['name'] as string;
      if (state.names.has(name)) return;
      if (HELPER_BY_NAME.has(name))
        refuse(
          state,
          `${name} is a helper; write it with parentheses, for example ${HELPER_BY_NAME.get(name)!.signature}.`,
          findIdentifier(state.text, name),
        );
      if (own(ALLOWED_FUNCTIONS, name))
        refuse(state, `${name} is a function; write it with parentheses, for example ${name}(x).`, findIdentifier(state.text, name));
      if (DANGEROUS_FUNCTIONS.has(name)) refuse(state, `"${name}" cannot be used in a formula.`, findIdentifier(state.text, name));
      if (isValuelessUnit(name)) {
        refuse(
          state,
          `"${name}" is not a measure Tidemark knows, and units are not allowed in formulas: values are in the units shown in the column headers.${suggest(name, state.names)}`,
          findIdentifier(state.text, name),
        );
      }
      refuse(
        state,
        `"${name}" is not a measure, fact or helper Tidemark knows.${suggest(name, state.names)}`,
        findIdentifier(state.text, name),
      );
      break;
    }
    case 'ParenthesisNode':
      walk(n['content'] as MathNode, state, depth + 1);
      return;
    case 'OperatorNode': {
      const fn = n['fn'] as string;
      const op = n['op'] as string;
      const args = n['args'] as MathNode[];
      if (n['isPercentage'] === true) {
        refuse(
          state,
          'the per-cent sign after a value is not allowed: write / 100 (and use mod for a remainder).',
          findFirst(state.text, /%/),
        );
      }
      if (!OPERATORS.has(fn)) {
        const why = (own(REFUSED_OPERATORS, fn) ? REFUSED_OPERATORS[fn] : undefined) ?? `the operator "${op}" is not allowed`;
        const pos = /^[a-z]+$/.test(op)
          ? findIdentifier(state.text, op)
          : findFirst(state.text, new RegExp(op.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')));
        refuse(state, `${why}.`, pos);
      }
      if (fn === 'nullish') {
        const left = args[0]!;
        const leftOk =
          left.type === 'SymbolNode' ||
          (left.type === 'FunctionNode' && HELPER_BY_NAME.has((left as unknown as { fn: { name?: string } }).fn.name ?? ''));
        if (!leftOk)
          refuse(state, 'the left side of ?? must be a name or a helper call, for example uo_ml ?? 0.', findFirst(state.text, /\?\?/));
      }
      for (const a of args) walk(a, state, depth + 1);
      return;
    }
    case 'RelationalNode': {
      const conditionals = n['conditionals'] as string[];
      for (const c of conditionals) {
        if (!OPERATORS.has(c)) refuse(state, `the comparison "${c}" is not allowed.`, undefined);
      }
      for (const p of n['params'] as MathNode[]) walk(p, state, depth + 1);
      return;
    }
    case 'ConditionalNode':
      walk(n['condition'] as MathNode, state, depth + 1);
      walk(n['trueExpr'] as MathNode, state, depth + 1);
      walk(n['falseExpr'] as MathNode, state, depth + 1);
      return;
    case 'FunctionNode': {
      const fnNode = n['fn'] as MathNode;
      const args = n['args'] as MathNode[];
      if (fnNode.type !== 'SymbolNode') {
        refuse(
          state,
          'only named functions can be called (no property access such as a.b or a[1]).',
          findFirst(state.text, /\.(?=[A-Za-z_$])|\[|\?\./),
        );
      }
      const name = (fnNode as unknown as { name: string }).name;
      const helper = HELPER_BY_NAME.get(name);
      if (helper) {
        if (helper.takesKey) {
          if (args.length !== 1)
            refuse(state, `${name}() takes exactly one key, for example ${helper.signature}.`, findIdentifier(state.text, name));
          checkKeyArgument(state, helper, args[0]!);
          state.nodes += 2;
        } else if (args.length !== 0) {
          refuse(state, `${name}() takes nothing between its parentheses.`, findIdentifier(state.text, name));
        }
        return;
      }
      const arity = own(ALLOWED_FUNCTIONS, name) ? ALLOWED_FUNCTIONS[name] : undefined;
      if (!arity) {
        const pos = findIdentifier(state.text, name);
        if (DANGEROUS_FUNCTIONS.has(name)) {
          refuse(
            state,
            `"${name}" cannot be used in a formula: it could change or bypass the calculator itself. Functions you can use: ${Object.keys(ALLOWED_FUNCTIONS).join(', ')}, and the helpers ${HELPERS.map((h) => h.name).join(', ')}.`,
            pos,
          );
        }
        if (state.names.has(name)) refuse(state, `"${name}" is a value, not a function; to multiply, write ${name} * (...).`, pos);
        refuse(
          state,
          `"${name}" is not a function you can use. Functions: ${Object.keys(ALLOWED_FUNCTIONS).join(', ')}; helpers: ${HELPERS.map((h) => h.name).join(', ')}.${suggest(name, [...Object.keys(ALLOWED_FUNCTIONS), ...HELPER_BY_NAME.keys()])}`,
          pos,
        );
      }
      const [lo, hi] = arity;
      if (args.length < lo || args.length > hi) {
        const want = lo === hi ? `${lo}` : `${lo} to ${hi}`;
        refuse(state, `${name}() takes ${want} value${hi === 1 ? '' : 's'}, not ${args.length}.`, findIdentifier(state.text, name));
      }
      for (const a of args) walk(a, state, depth + 1);
      return;
    }
    case 'AssignmentNode':
      refuse(state, 'assignment with "=" is not allowed; to compare, use "==".', findFirst(state.text, /(?<![=<>!])=(?!=)/));
      break;
    case 'FunctionAssignmentNode':
      refuse(state, 'defining a function (f(x) = ...) is not allowed.', findFirst(state.text, /(?<![=<>!])=(?!=)/));
      break;
    case 'AccessorNode':
    case 'IndexNode':
      refuse(state, 'property or index access (a.b, a[1], a?.b) is not allowed.', findFirst(state.text, /\?\.|\.(?=[A-Za-z_$])|\[/));
      break;
    case 'ArrayNode':
      refuse(state, 'lists and matrices [ ... ] are not allowed.', findFirst(state.text, /\[/));
      break;
    case 'ObjectNode':
      refuse(state, 'objects { ... } are not allowed.', findFirst(state.text, /\{/));
      break;
    case 'RangeNode':
      refuse(state, 'ranges (a:b) are not allowed.', findFirst(state.text, /:/));
      break;
    case 'BlockNode':
      refuse(state, 'a formula is one expression; ";" and line breaks are not allowed.', findFirst(state.text, /[;\n]/));
      break;
    default:
      refuse(state, `this kind of expression (${node.type}) is not allowed.`, undefined);
  }
}

/**
 * Every name in the text must be in the parsed tree. Defensive: mathjs has corners where text
 * after an operator is dropped without an error (seen with the per-cent sign); a formula whose
 * text was not all read is refused rather than computed from part of it.
 */
function checkEverythingRead(text: string, tree: MathNode): void {
  const read = new Set<string>();
  tree.traverse((node: MathNode) => {
    const n = node as unknown as Record<string, unknown>;
    if (node.type === 'SymbolNode') read.add(n['name'] as string);
    else if (node.type === 'OperatorNode' && /^[a-z]+$/.test(n['op'] as string)) read.add(n['op'] as string);
    else if (node.type === 'ConstantNode') read.add(String(n['value']));
  });
  for (const t of identifiers(text)) {
    if (!read.has(t.text))
      throw new Refusal(`${at(t.pos)}"${t.text}" was not read as part of the formula; is something out of place before it?`, t.pos);
  }
}

function synthName(ref: Ref): string {
  switch (ref.kind) {
    case 'value':
      return `_v$${ref.key}`;
    case 'fact':
      return `_f$${ref.fact}`;
    case 'hours_since_prev':
    case 'hours_since_t0':
      return `_t$${ref.kind}`;
    default:
      return `_${ref.kind}$${ref.key}`;
  }
}

/**
 * Parses, checks and compiles a formula once. Never throws: a refusal says what is wrong in
 * plain words and, where it can, the character it starts at (1-based).
 */
export function compileFormula(text: string, options: CompileOptions = {}): CompileResult {
  try {
    return compileOrThrow(text, options);
  } catch (e) {
    if (e instanceof Refusal)
      return e.position === undefined ? { ok: false, error: e.message } : { ok: false, error: e.message, position: e.position };
    return { ok: false, error: `This cannot be read as a formula (${e instanceof Error ? e.message : String(e)}).` };
  }
}

function compileOrThrow(text: string, options: CompileOptions): CompileResult {
  if (typeof text !== 'string') return { ok: false, error: 'A formula must be text.' };
  if (text.length > MAX_FORMULA_LENGTH) {
    return {
      ok: false,
      error: `The formula is ${text.length} characters long; the limit is ${MAX_FORMULA_LENGTH}.`,
      position: MAX_FORMULA_LENGTH + 1,
    };
  }
  if (text.trim() === '') return { ok: false, error: 'The formula is empty.' };
  const { keys, helperKeys } = known();
  const columns = new Set<string>();
  for (const c of options.columns ?? []) columns.add(c);
  const names = new Set<string>([...keys, ...Object.keys(FACTS), ...columns]);

  // Comments are never part of a formula; refusing them before parsing also avoids text that the
  // parser would silently drop.
  const hash = findFirst(text, /#/);
  if (hash !== undefined) return { ok: false, error: `${at(hash)}comments (#) are not allowed in formulas.`, position: hash };

  let tree: MathNode;
  try {
    tree = parseExpression(text);
  } catch (e) {
    const char = (e as { char?: unknown }).char;
    const position = typeof char === 'number' ? Math.min(Math.max(1, char), text.length + 1) : undefined;
    const msg = e instanceof Error ? e.message : String(e);
    const plain = plainSyntaxMessage(msg);
    return position === undefined
      ? { ok: false, error: `${plain[0]!.toUpperCase()}${plain.slice(1)}.` }
      : { ok: false, error: `${at(position)}${plain}.`, position };
  }
  // Count the parts first (a long chain a + b + c... is deep but harmless up to the part limit).
  let count = 0;
  tree.traverse(() => {
    count++;
  });
  if (count > MAX_FORMULA_NODES) {
    return { ok: false, error: `The formula is too complex: ${count} parts, the limit is ${MAX_FORMULA_NODES}.` };
  }
  const state: WalkState = { text, names, helperKeys, columns, nodes: 0 };
  walk(tree, state, 0);
  checkEverythingRead(text, tree);
  // Quotes that survived the walk were dropped by the parser: refuse them too.
  const quote = findFirst(text, /["'`]/);
  if (quote !== undefined)
    return { ok: false, error: `${at(quote)}text in quotes (and the transpose mark ') is not allowed in formulas.`, position: quote };

  // Rename every reference to a private symbol; rewrite helpers and `x ?? y`.
  const table = new Map<string, { ref: Ref; presence: boolean }>();
  const refs: Ref[] = [];
  const seen = new Set<string>();
  const addRef = (ref: Ref, presence: boolean): string => {
    const base = synthName(ref);
    if (!seen.has(base)) {
      seen.add(base);
      refs.push(ref);
    }
    const name = presence ? `_has${base}` : base;
    table.set(name, { ref, presence });
    return name;
  };
  const refOf = (node: MathNode): Ref | undefined => {
    if (node.type === 'SymbolNode') {
      const name = (node as unknown as { name: string }).name;
      if (own(FACTS, name)) return { kind: 'fact', fact: name as FactName };
      return { kind: 'value', key: name };
    }
    if (node.type === 'FunctionNode') {
      const f = node as unknown as { fn: { name?: string }; args: MathNode[] };
      const helper = HELPER_BY_NAME.get(f.fn.name ?? '');
      if (!helper || helper.name === 'has') return undefined;
      if (!helper.takesKey) return { kind: helper.name as 'hours_since_prev' | 'hours_since_t0' };
      const key = (f.args[0] as unknown as { name: string }).name;
      return { kind: helper.name as 'prev' | 'first' | 'at_t0' | 'running_sum', key };
    }
    return undefined;
  };
  const rewrite = (root: MathNode): MathNode =>
    root.transform((node: MathNode, path: string): MathNode => {
      // The name of a called function stays as it is (abs, min...); only references are renamed.
      if (path === 'fn') return node;
      if (node.type === 'OperatorNode' && (node as unknown as { fn: string }).fn === 'nullish') {
        const [left, right] = (node as unknown as { args: MathNode[] }).args as [MathNode, MathNode];
        const ref =
          left.type === 'FunctionNode' && (left as unknown as { fn: { name?: string } }).fn.name === 'has' ? undefined : refOf(left);
        if (!ref) return node;
        return new ConditionalNodeCtor(new SymbolNodeCtor(addRef(ref, true)), new SymbolNodeCtor(addRef(ref, false)), rewrite(right));
      }
      if (node.type === 'FunctionNode') {
        const f = node as unknown as { fn: { name?: string }; args: MathNode[] };
        if (f.fn.name === 'has') {
          const key = (f.args[0] as unknown as { name: string }).name;
          return new SymbolNodeCtor(addRef({ kind: 'value', key }, true));
        }
      }
      const ref = refOf(node);
      if (ref) return new SymbolNodeCtor(addRef(ref, false));
      return node;
    });
  const rewritten = rewrite(tree);
  const code = rewritten.compile();

  const rowKeys = new Set<string>();
  const helperKeyMap = new Map<'prev' | 'first' | 'at_t0' | 'running_sum', Set<string>>();
  const facts = new Set<FactName>();
  let usesTime = false;
  for (const ref of refs) {
    if (ref.kind === 'value') rowKeys.add(ref.key);
    else if (ref.kind === 'fact') facts.add(ref.fact);
    else if (ref.kind === 'hours_since_prev' || ref.kind === 'hours_since_t0') usesTime = true;
    else {
      const h = ref as { kind: 'prev' | 'first' | 'at_t0' | 'running_sum'; key: string };
      let s = helperKeyMap.get(h.kind);
      if (!s) helperKeyMap.set(h.kind, (s = new Set()));
      s.add(h.key);
    }
  }

  const formula: CompiledFormula = {
    text,
    refs,
    rowKeys,
    helperKeys: helperKeyMap,
    facts,
    usesTime,
    evaluate(resolve: Resolver): EvalResult {
      let value: unknown;
      try {
        value = code.evaluate(new RowScope(table, resolve));
      } catch (e) {
        if (e instanceof MissingValue) {
          const missing: string[] = [];
          for (const r of refs) {
            const v = safeResolve(resolve, r);
            if (v === undefined) missing.push(refText(r));
          }
          if (missing.length === 0) missing.push(refText(e.ref));
          return { ok: false, missing };
        }
        return { ok: false, error: `cannot be worked out here: ${e instanceof Error ? e.message : String(e)}` };
      }
      if (typeof value === 'boolean') return { ok: true, value };
      if (typeof value === 'number') {
        if (Number.isNaN(value))
          return { ok: false, error: 'the result is not a number (for example the square root or logarithm of a negative number)' };
        if (!Number.isFinite(value)) return { ok: false, error: 'the result is infinite (division by zero, or a number too large)' };
        return { ok: true, value: value === 0 ? 0 : value };
      }
      return { ok: false, error: 'the result is not a number' };
    },
  };
  return { ok: true, formula };
}

function safeResolve(resolve: Resolver, ref: Ref): number | undefined {
  try {
    const v = resolve(ref);
    return typeof v === 'number' && !Number.isNaN(v) ? v : undefined;
  } catch {
    return undefined;
  }
}

/** Resolver over plain values (for tests and simple callers): keys and facts only, no helpers. */
export function mapResolver(values: ReadonlyMap<string, number> | Readonly<Record<string, number>>): Resolver {
  const map: ReadonlyMap<string, number> = values instanceof Map ? values : new Map(Object.entries(values));
  return (ref) => {
    if (ref.kind === 'value') return map.get(ref.key);
    if (ref.kind === 'fact') return map.get(ref.fact);
    return undefined;
  };
}
