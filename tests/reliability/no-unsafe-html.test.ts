// No user text can reach an HTML parser or a script sink: a scan of every source file of the app
// (comments removed) for the DOM and Lit APIs that parse strings as markup or code, and for URL
// bindings in templates (Lit does not check URL schemes). The production page also enforces this
// at run time with Trusted Types (network.test.ts shows raw innerHTML refused there).
// Sinks listed from lit.dev ("Expressions", unsafeHTML/unsafeSVG/unsafeCSS/unsafeStatic), the
// W3C Trusted Types injection sinks and OWASP's DOM-based XSS prevention cheat sheet
// (reference/reliability-security-performance.md §5).
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const SRC = fileURLToPath(new URL('../../src/', import.meta.url));

function files(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return files(path);
    return /\.(ts|js|mjs)$/.test(name) ? [path] : [];
  });
}

/** Source without comments (strings are kept; a sink hidden in a string is still a finding). */
function code(text: string): string {
  return text.replace(/\/\*[\s\S]*?\*\//g, '').replace(/(^|[^:'"`\\])\/\/.*$/gm, '$1');
}

const SINKS: [string, RegExp][] = [
  ['innerHTML', /\binnerHTML\b/],
  ['outerHTML', /\bouterHTML\b/],
  ['insertAdjacentHTML', /\binsertAdjacentHTML\b/],
  ['document.write', /\bdocument\s*\.\s*write(ln)?\b/],
  ['DOMParser', /\bDOMParser\b/],
  ['createContextualFragment', /\bcreateContextualFragment\b/],
  ['setHTMLUnsafe / parseHTMLUnsafe', /\b(setHTMLUnsafe|parseHTMLUnsafe)\b/],
  ['srcdoc', /\bsrcdoc\b/],
  ['Lit unsafeHTML/unsafeSVG/unsafeCSS/unsafeStatic', /\bunsafe(HTML|SVG|CSS|Static|MathML)\b/],
  ['eval', /(^|[^.\w])eval\s*\(/],
  ['new Function', /\bnew\s+Function\s*\(/],
  ['string timers', /\bset(Timeout|Interval)\s*\(\s*['"`]/],
  ['javascript: URL', /javascript:/i],
  ['URL attribute bound in a template', /\b(href|src|action|formaction|xlink:href)\s*=\s*\$\{/],
  ['style attribute bound in a template', /\bstyle\s*=\s*\$\{/],
];

describe('no user text reaches an HTML or script sink', () => {
  const all = files(SRC);

  it('scans every source file of the app', () => {
    expect(all.length).toBeGreaterThan(40);
  });

  it('uses none of the sinks that parse strings as markup or code', () => {
    const findings: string[] = [];
    for (const path of all) {
      const lines = code(readFileSync(path, 'utf8')).split('\n');
      lines.forEach((line, i) => {
        for (const [what, re] of SINKS) if (re.test(line)) findings.push(`${path.slice(SRC.length)}:${i + 1}: ${what}: ${line.trim()}`);
      });
    }
    expect(findings).toEqual([]);
  });

  it('would notice each sink (the patterns match their own examples)', () => {
    const examples = [
      'el.innerHTML = s',
      'el.outerHTML = s',
      'el.insertAdjacentHTML("beforeend", s)',
      'document.write(s)',
      'new DOMParser()',
      'range.createContextualFragment(s)',
      'el.setHTMLUnsafe(s)',
      'frame.srcdoc = s',
      'html`${unsafeHTML(s)}`',
      'eval(s)',
      'new Function(s)',
      'setTimeout("x()", 1)',
      'a.href = "javascript:x()"',
      'html`<a href=${url}>`',
      'html`<p style=${s}>`',
    ];
    for (const [i, [what, re]] of SINKS.entries()) expect(re.test(code(examples[i]!)), what).toBe(true);
    // Mentions in comments are not code.
    expect(code('// innerHTML is never used\n/* eval( */ x')).not.toMatch(/innerHTML|eval/);
  });
});
