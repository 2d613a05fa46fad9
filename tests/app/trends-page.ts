// Wires the fictional fixture into <tm-trends> on the test-only page (for screenshots).
// `?select=<rowId>` marks a row as selected; `?print` is for print-emulated screenshots.
import '../../src/app/tm-trends.js';
import { evaluate, worksheetSetIds } from '../../src/goals/engine.js';
import { deriveAll } from '../../src/sheet/derived.js';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import { TRENDS_NOW, trendsFixture } from './trends-fixture.js';

const el = document.querySelector('tm-trends')!;
const params = new URLSearchParams(location.search);
// `?demo` shows the shared fictional demo worksheet (default goal sets; `&egdt` adds EGDT).
const ws = params.has('demo')
  ? {
      ...demoWorksheet(TRENDS_NOW, undefined, 60),
      ...(params.has('egdt') ? { goalSets: ['ssc-hour1', 'sep1', 'ssc2021-targets', 'egdt'] } : {}),
    }
  : trendsFixture(params.has('defaults') ? ['ssc-hour1', 'sep1', 'ssc2021-targets'] : undefined);
el.worksheet = ws;
el.derived = deriveAll(ws).rows;
el.goals = evaluate(ws, worksheetSetIds(ws), TRENDS_NOW);
el.now = TRENDS_NOW;
const sel = params.get('select');
el.selectedRowId = sel === null ? null : (ws.rows[Number(sel)]?.id ?? null);
