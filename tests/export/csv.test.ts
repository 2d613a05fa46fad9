// CSV export and import. Sources:
// - RFC 4180 §2 (datatracker.ietf.org/doc/rfc4180): CRLF record ends; fields holding `"`, `,`,
//   CR or LF are enclosed in double quotes; an embedded `"` is written `""`; spaces are part of a field.
// - OWASP "CSV Injection" (www-community pages/attacks/CSV_Injection.md): no cell may begin with
//   = + - @ Tab (0x09) CR (0x0D) LF (0x0A); prefix a single quote; worked example
//   `=1+2";=1+2` -> `"'=1+2"";=1+2"`. OWASP ASVS 5.0 V1.2.10 adds NUL (\0). CWE-1236 same mitigation.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  CSV_EOL,
  csvTime,
  escapeCsvField,
  formatCsvNumber,
  guardFormulaLead,
  isFormulaLike,
  unguardFormulaLead,
  worksheetToCsv,
} from '../../src/export/csv.js';
import { parseCsvRecords, readWorksheetCsv, worksheetFromCsvRows } from '../../src/export/csv-read.js';
import { fixtureWorksheet } from './fixture.js';

// OWASP CSV Injection list plus ASVS V1.2.10's NUL.
const OWASP_LEADS = ['=', '+', '-', '@', '\t', '\r', '\n', '\0'];

describe('formula guard (OWASP CSV Injection)', () => {
  for (const lead of OWASP_LEADS) {
    const payload = `${lead}cmd|' /C calc'!A0`;
    it(`prefixes a quote to a text beginning with ${JSON.stringify(lead)}`, () => {
      expect(isFormulaLike(payload)).toBe(true);
      expect(guardFormulaLead(payload)).toBe(`'${payload}`);
      // Idempotent: guarding twice adds nothing more.
      expect(guardFormulaLead(guardFormulaLead(payload))).toBe(`'${payload}`);
      // And the reader's inverse gives the original back.
      expect(unguardFormulaLead(guardFormulaLead(payload))).toBe(payload);
    });
  }

  it('looks past leading blanks and invisible characters (security reference §4: NUL/invisible before =)', () => {
    for (const t of [' =1+2', '\u200B=1+2', '\uFEFF@SUM(1)', '\u00A0-2+3']) {
      expect(guardFormulaLead(t)).toBe(`'${t}`);
    }
  });

  it('leaves ordinary text alone', () => {
    for (const t of ['piperacillin 4.5 g', 'bedside exam', "'quoted", '5 mg', 'e=mc2', 'a-b', '']) {
      expect(guardFormulaLead(t)).toBe(t);
    }
  });

  it('matches the OWASP worked example once RFC-quoted', () => {
    expect(escapeCsvField(guardFormulaLead('=1+2";=1+2'))).toBe(`"'=1+2"";=1+2"`);
  });

  it('property: a guarded field never starts with a dangerous character and guarding is idempotent', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary' }), (s) => {
        const g = guardFormulaLead(s);
        expect(OWASP_LEADS.includes(g[0] ?? '')).toBe(false);
        expect(guardFormulaLead(g)).toBe(g);
        expect(isFormulaLike(g)).toBe(false);
      }),
      { numRuns: 3000 },
    );
  });
});

describe('RFC 4180 quoting', () => {
  it('quotes fields holding a comma, a quote, CR or LF and doubles quotes', () => {
    expect(escapeCsvField('a,b')).toBe('"a,b"');
    expect(escapeCsvField('say "hi"')).toBe('"say ""hi"""');
    expect(escapeCsvField('line1\r\nline2')).toBe('"line1\r\nline2"');
    expect(escapeCsvField('cr\ronly')).toBe('"cr\ronly"');
    expect(escapeCsvField('lf\nonly')).toBe('"lf\nonly"');
  });
  it('leaves plain fields bare and keeps spaces (spaces are part of a field)', () => {
    expect(escapeCsvField(' 12 ')).toBe(' 12 ');
    expect(escapeCsvField('plain')).toBe('plain');
  });
  it('property: the parser reads back exactly what the writer quoted', () => {
    fc.assert(
      fc.property(fc.array(fc.string({ unit: 'binary' }), { minLength: 2, maxLength: 6 }), (fields) => {
        const text = fields.map(escapeCsvField).join(',') + CSV_EOL;
        const r = parseCsvRecords(text);
        expect(r.ok).toBe(true);
        if (r.ok) expect(r.records[0]?.fields).toEqual(fields);
      }),
      { numRuns: 2000 },
    );
  });
});

describe('worksheetToCsv', () => {
  const ws = fixtureWorksheet();
  const csv = worksheetToCsv(ws);
  const lines = csv.split(CSV_EOL);

  it('ends every record with CRLF and has one line per row plus a header', () => {
    expect(csv.endsWith('\r\n')).toBe(true);
    expect(lines.at(-1)).toBe('');
    expect(lines.length - 1).toBe(ws.rows.length + 1);
    expect(csv.replace(/\r\n/g, '')).not.toMatch(/[\r\n]/);
  });

  it('writes the header as time, charted keys in catalog order, then derived.<key>', () => {
    const head = lines[0]!.split(',');
    expect(head[0]).toBe('time');
    // Catalog order (src/sheet/measures.ts): sbp, dbp, map, hr, rr, temp, spo2, gcs, crt, cvp, lactate, scvo2 ...
    expect(head.slice(1, 13)).toEqual(['sbp', 'dbp', 'map', 'hr', 'rr', 'temp', 'spo2', 'gcs', 'crt', 'cvp', 'lactate', 'scvo2']);
    expect(head).toContain('derived.fluid_total_ml');
    expect(head).toContain('derived.ne_equivalent');
    // Charted measures without a value anywhere are left out.
    expect(head).not.toContain('svo2');
  });

  it('writes times as ISO 8601 with the row offset', () => {
    expect(lines[1]!.startsWith('2026-03-01T08:00:00+01:00,')).toBe(true);
    expect(csvTime('2026-03-01T07:00:00.250Z', -300)).toBe('2026-03-01T02:00:00.250-05:00');
  });

  it('does not prefix negative numbers written by our formatter (decision: numbers are data)', () => {
    const head = lines[0]!.split(',');
    const be = head.indexOf('base_excess');
    expect(lines[2]!.split(',')[be]).toBe('-5');
    const dl = head.indexOf('derived.lactate_change_pct');
    // (2.9 - 4.6) / 4.6 x 100 = -36.9565 % (derived, reference file §8 formula, sign reversed),
    // written with one decimal more than shown (1 + 1).
    expect(lines[6]!.split(',')[dl]).toBe('-36.96');
  });

  it('neutralises a hostile note and writes marks as yes or their text', () => {
    expect(csv).toContain(`"'=HYPERLINK(""http://example.invalid"",""x"")"`);
    const head = lines[0]!.split(',');
    expect(lines[2]!.split(',')[head.indexOf('cultures_drawn')]).toBe('yes');
    expect(csv).toContain('"bedside exam, CRT 3 s"');
  });

  it('adds scores and the worksheet own derived columns after the built-in ones', () => {
    const w = { ...ws, derivedColumns: [{ key: 'map_margin', label: 'MAP above 65', expression: 'map - 65' }] };
    const text = worksheetToCsv(w);
    const head = text.split(CSV_EOL)[0]!.split(',');
    expect(head.indexOf('derived.qsofa')).toBeGreaterThan(head.indexOf('derived.ne_equivalent'));
    expect(head.at(-1)).toBe('derived.map_margin');
    const row = text.split(CSV_EOL)[3]!.split(','); // 08:25, MAP 58
    expect(row[head.indexOf('derived.map_margin')]).toBe('-7');
    // qSOFA at 08:00: RR 26 >= 22, SBP 82 <= 100, GCS 14 < 15: 3 points (Sepsis-3, reference file §5).
    expect(text.split(CSV_EOL)[1]!.split(',')[head.indexOf('derived.qsofa')]).toBe('3');
  });

  it('writes plain decimals, never exponents', () => {
    expect(formatCsvNumber(0.0000001)).toBe('0.0000001');
    expect(formatCsvNumber(-0)).toBe('0');
    expect(formatCsvNumber(0.1 + 0.2)).toBe('0.3');
    expect(formatCsvNumber(1e21)).toBe('1000000000000000000000');
  });
});

describe('CSV round trip', () => {
  it('worksheet -> CSV -> worksheet gives the same rows and values', () => {
    const ws = fixtureWorksheet();
    const read = readWorksheetCsv(worksheetToCsv(ws));
    expect(read.ok).toBe(true);
    if (!read.ok) return;
    const back = worksheetFromCsvRows(read, { label: ws.label, weightKg: 80, timeZero: ws.timeZero! }, Date.parse('2026-03-01T12:00:00Z'));
    expect(back.ok).toBe(true);
    if (!back.ok) return;
    const strip = (w: typeof ws) =>
      w.rows.map((r) => ({
        time: r.time,
        offset: r.offset,
        cells: Object.fromEntries(Object.entries(r.cells).map(([k, c]) => [k, { value: c.value, text: c.text, flag: c.flag }])),
      }));
    expect(strip(back.worksheet)).toEqual(strip(ws));
    // And the CSV of the copy is the same text.
    expect(worksheetToCsv(back.worksheet)).toBe(worksheetToCsv(ws));
  });

  it('reads rows in any order and sorts them by time', () => {
    const text = 'time,map,lactate\n2026-03-01T09:00+01:00,70,\n2026-03-01T08:00+01:00,60,4.2\n';
    const r = readWorksheetCsv(text);
    expect(r.ok && r.rows.map((x) => x.time)).toEqual(['2026-03-01T07:00:00.000Z', '2026-03-01T08:00:00.000Z']);
  });

  it('converts accepted units to canonical (lactate 36 mg/dL = 4.0 mmol/L, ÷ 9.008, reference file §8)', () => {
    const r = readWorksheetCsv('time,lactate\n2026-03-01T08:00Z,36 mg/dL\n');
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.rows[0]!.cells['lactate']!.value).toBeCloseTo(3.9964, 3);
  });

  it('takes any non-empty mark cell as a mark, but refuses "no"', () => {
    const r = readWorksheetCsv('time,cultures_drawn\n2026-03-01T08:00Z,x\n2026-03-01T08:30Z,two sets\n2026-03-01T09:00Z,\n');
    expect(r.ok).toBe(true);
    if (r.ok) {
      expect(r.rows[0]!.cells['cultures_drawn']).toEqual({ value: true });
      expect(r.rows[1]!.cells['cultures_drawn']).toEqual({ value: true, text: 'two sets' });
      expect(r.rows[2]!.cells['cultures_drawn']).toBeUndefined();
    }
    const no = readWorksheetCsv('time,cultures_drawn\n2026-03-01T08:00Z,no\n');
    expect(no.ok).toBe(false);
    if (!no.ok) expect(no.errors[0]).toMatchObject({ line: 2, column: 'cultures_drawn' });
  });
});

describe('readWorksheetCsv errors name the line and the column', () => {
  const cases: [string, string, number, string | undefined][] = [
    ['out of range value', 'time,map\n2026-03-01T08:00Z,65\n2026-03-01T08:30Z,900\n', 3, 'map'],
    ['not a number', 'time,map,lactate\n2026-03-01T08:00Z,65,high\n', 2, 'lactate'],
    ['unknown key', 'time,map,pulse\n2026-03-01T08:00Z,65,80\n', 1, 'pulse'],
    ['first column not time', 'map,time\n65,2026-03-01T08:00Z\n', 1, 'map'],
    ['time without offset', 'time,map\n2026-03-01T08:00,65\n', 2, 'time'],
    ['bad time', 'time,map\nyesterday,65\n', 2, 'time'],
    ['too few fields', 'time,map,hr\n2026-03-01T08:00Z,65\n', 2, undefined],
    ['duplicate column', 'time,map,map\n', 1, 'map'],
    ['unclosed quote', 'time,note\n2026-03-01T08:00Z,"open\n', 2, undefined],
    ['quote inside unquoted field', 'time,note\n2026-03-01T08:00Z,ab"c\n', 2, undefined],
  ];
  for (const [name, text, line, column] of cases) {
    it(name, () => {
      const r = readWorksheetCsv(text);
      expect(r.ok).toBe(false);
      if (r.ok) return;
      expect(r.errors[0]!.line).toBe(line);
      expect(r.errors[0]!.column).toBe(column);
      expect(r.errors[0]!.message.length).toBeGreaterThan(5);
    });
  }

  it('counts lines inside quoted fields for the line number', () => {
    const r = readWorksheetCsv('time,note,map\n2026-03-01T08:00Z,"two\nlines",65\n2026-03-01T09:00Z,x,abc\n');
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors[0]).toMatchObject({ line: 4, column: 'map' });
  });

  it('refuses worksheet facts out of range (weight 1–400 kg, src/sheet/model.ts)', () => {
    const r = readWorksheetCsv('time,map\n2026-03-01T08:00Z,65\n');
    if (!r.ok) throw new Error('fixture');
    const w = worksheetFromCsvRows(r, { label: 'x', weightKg: 4000 }, 0);
    expect(w.ok).toBe(false);
    if (!w.ok) expect(w.errors[0]!.column).toBe('weightKg');
  });
});

describe('hostile input never throws', () => {
  const keys = ['time', 'map', 'lactate', 'note', 'cultures_drawn', 'derived.map', 'bogus', ''];
  const fieldArb = fc.oneof(
    fc.string({ unit: 'binary' }),
    fc.constantFrom(
      '"',
      '""',
      '"a"b',
      '\r',
      '\n',
      '\r\n',
      ',',
      '=1+2',
      '2026-03-01T08:00Z',
      '2026-02-30T08:00+01:00',
      '65',
      '-1e999',
      'NaN',
      '\0',
      '\uFEFF',
    ),
  );
  it('property: arbitrary text returns ok or errors, never throws', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 400 }), (s) => {
        const r = readWorksheetCsv(s);
        expect(typeof r.ok).toBe('boolean');
        if (!r.ok) expect(r.errors.length).toBeGreaterThan(0);
      }),
      { numRuns: 3000 },
    );
  });
  it('property: CSV-shaped hostile records return ok or errors with a line, never throw', () => {
    fc.assert(
      fc.property(
        fc.array(fc.constantFrom(...keys), { minLength: 1, maxLength: 5 }),
        fc.array(fc.array(fieldArb, { maxLength: 6 }), { maxLength: 8 }),
        fc.constantFrom('\r\n', '\n', '\r'),
        (head, body, eol) => {
          const text = [head.join(','), ...body.map((f) => f.join(','))].join(eol);
          const r = readWorksheetCsv(text);
          if (!r.ok) {
            expect(r.errors.length).toBeGreaterThan(0);
            for (const e of r.errors) expect(e.line).toBeGreaterThanOrEqual(1);
          } else {
            for (const row of r.rows) expect(Number.isFinite(Date.parse(row.time))).toBe(true);
          }
        },
      ),
      { numRuns: 3000 },
    );
  });
});
