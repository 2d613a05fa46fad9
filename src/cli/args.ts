/**
 * Command-line arguments: `tidemark <command> <path> [options]`. Pure; errors come back as a
 * result, never thrown.
 */
import { parseArgs } from 'node:util';

export const COMMANDS = ['status', 'note', 'csv', 'fhir', 'review'] as const;
export type CommandName = (typeof COMMANDS)[number];

export interface CliOptions {
  at?: string;
  sets?: string[];
  json: boolean;
  weightKg?: string;
  heightCm?: string;
  sex?: string;
  timeZero?: string;
  timeZeroBasis?: string;
  label?: string;
}

export type ParsedArgs =
  | { kind: 'help' }
  | { kind: 'version' }
  | { kind: 'run'; command: CommandName; path: string; options: CliOptions }
  | { kind: 'usage-error'; message: string };

const OPTIONS = {
  help: { type: 'boolean', short: 'h' },
  version: { type: 'boolean' },
  json: { type: 'boolean' },
  at: { type: 'string' },
  sets: { type: 'string' },
  'weight-kg': { type: 'string' },
  'height-cm': { type: 'string' },
  sex: { type: 'string' },
  'time-zero': { type: 'string' },
  'time-zero-basis': { type: 'string' },
  label: { type: 'string' },
} as const;

/** Options each command accepts (beyond --help). */
const ALLOWED: Record<CommandName, readonly string[]> = {
  status: ['at', 'sets', 'json', 'weight-kg', 'height-cm', 'sex', 'time-zero', 'time-zero-basis', 'label'],
  note: ['at', 'sets', 'weight-kg', 'height-cm', 'sex', 'time-zero', 'time-zero-basis', 'label'],
  csv: ['weight-kg', 'height-cm', 'sex', 'time-zero', 'time-zero-basis', 'label'],
  fhir: ['at', 'weight-kg', 'height-cm', 'sex', 'time-zero', 'time-zero-basis', 'label'],
  review: ['at', 'sets', 'json', 'weight-kg', 'height-cm', 'sex', 'time-zero-basis'],
};

function oneLine(text: string): string {
  return text.replace(/\s+/g, ' ').trim();
}

export function parseCliArgs(argv: readonly string[]): ParsedArgs {
  let parsed: ReturnType<typeof parseArgs<{ options: typeof OPTIONS; allowPositionals: true; strict: true }>>;
  try {
    parsed = parseArgs({ args: [...argv], options: OPTIONS, allowPositionals: true, strict: true });
  } catch (e) {
    return { kind: 'usage-error', message: oneLine(e instanceof Error ? e.message : String(e)) };
  }
  const v = parsed.values;
  if (v.help) return { kind: 'help' };
  if (v.version) return { kind: 'version' };
  const [command, path, ...extra] = parsed.positionals;
  if (command === undefined) return { kind: 'help' };
  if (command === 'help') return { kind: 'help' };
  if (!(COMMANDS as readonly string[]).includes(command)) {
    return { kind: 'usage-error', message: `unknown command "${command}"; the commands are ${COMMANDS.join(', ')}` };
  }
  const cmd = command as CommandName;
  if (path === undefined || path === '') {
    return { kind: 'usage-error', message: `${cmd} needs a ${cmd === 'review' ? 'FOLDER' : 'FILE'}` };
  }
  const [unexpected] = extra;
  if (unexpected !== undefined) return { kind: 'usage-error', message: `unexpected argument "${unexpected}"` };
  for (const name of Object.keys(v)) {
    if (name === 'help' || name === 'version') continue;
    if (!ALLOWED[cmd].includes(name)) return { kind: 'usage-error', message: `--${name} does not apply to ${cmd}` };
  }
  const options: CliOptions = { json: v.json === true };
  if (v.at !== undefined) options.at = v.at;
  if (v.sets !== undefined) {
    const sets = v.sets
      .split(',')
      .map((s) => s.trim())
      .filter((s) => s.length > 0);
    if (sets.length === 0) return { kind: 'usage-error', message: '--sets needs one or more goal set ids, comma separated' };
    options.sets = sets;
  }
  if (v['weight-kg'] !== undefined) options.weightKg = v['weight-kg'];
  if (v['height-cm'] !== undefined) options.heightCm = v['height-cm'];
  if (v.sex !== undefined) options.sex = v.sex;
  if (v['time-zero'] !== undefined) options.timeZero = v['time-zero'];
  if (v['time-zero-basis'] !== undefined) options.timeZeroBasis = v['time-zero-basis'];
  if (v.label !== undefined) options.label = v.label;
  return { kind: 'run', command: cmd, path, options };
}

export const HELP_TEXT = `tidemark: read a Tidemark worksheet and report goal status, a note, CSV or FHIR

Usage:
  tidemark status FILE [--at TIME] [--sets IDS] [--json]
  tidemark note FILE [--at TIME] [--sets IDS]
  tidemark csv FILE
  tidemark fhir FILE [--at TIME]
  tidemark review FOLDER [--at TIME] [--sets IDS] [--json]
  tidemark --help

FILE is a JSON backup exported from the app, or a CSV file whose first line names the columns:
"time" first (ISO 8601 with offset, e.g. 2026-03-01T08:15+01:00), then measure keys (map,
lactate, fluid_ml, cultures_drawn, antibiotic ...). Rows may come in any order. In a mark
column any non-empty cell (yes, x or a short text) is a mark; an empty cell is none.
FOLDER holds such files (*.json, *.csv); review reports each goal across all of them.

Worksheet facts for a CSV file:
  --weight-kg N          body weight in kg
  --height-cm N          height in cm
  --sex female|male      for ideal body weight
  --time-zero TIME       ISO 8601 with offset; without it the suggested time zero is used,
                         and stderr says so
  --time-zero-basis B    triage, recognition, criteria or other (default: other)
  --label TEXT           a bed or case code (never a name or record number); for a backup
                         holding several worksheets, the one to use

Other options:
  --at TIME              judge the goals at this moment (ISO 8601 with offset); default now
  --sets IDS             goal sets, comma separated: ssc-hour1, sep1, ssc2021-targets, egdt,
                         custom; default the worksheet's own sets
  --json                 machine-readable output (status, review)

Exit codes: 0 done; 2 bad input (one line on stderr naming the file, row and column);
1 unexpected failure.

Caution: decision support only. Defaults follow published guidance and must be checked against
local protocols and licensed clinical judgment.
`;
