// ESLint (flat config): `npm run lint`. Tuned to catch faults, not to enforce taste: formatting is
// prettier's job, unused names are tsc's (noUnusedLocals/Parameters). DEVELOPERS.md, "Code health
// gates", says why each rule group is here. A local exception is written beside the line as
// `// eslint-disable-next-line rule -- reason`; whole files are never switched off.
import js from '@eslint/js';
import { defineConfig, globalIgnores } from 'eslint/config';
import lit from 'eslint-plugin-lit';
import wc from 'eslint-plugin-wc';
import globals from 'globals';
import tseslint from 'typescript-eslint';

/** Project rules: things that must never be written, wherever they are. */
const forbiddenSyntax = [
  {
    selector: 'TSEnumDeclaration',
    message: 'No enums: use a union of string literals (or an `as const` object) and a zod schema.',
  },
  {
    selector: 'AssignmentExpression[left.property.name=/^(innerHTML|outerHTML)$/]',
    message: 'Never write HTML strings into the DOM: render through a Lit template (it escapes text).',
  },
  {
    selector: 'CallExpression[callee.property.name=/^(insertAdjacentHTML|createContextualFragment)$/]',
    message: 'Never parse HTML strings into the DOM: render through a Lit template (it escapes text).',
  },
  {
    selector: "CallExpression[callee.object.name='document'][callee.property.name=/^(write|writeln)$/]",
    message: 'Never write HTML strings into the document: render through a Lit template.',
  },
];

/** One time source: the core and the elements take time from an injected `Clock`. */
const deviceClock = [
  {
    selector: "CallExpression[callee.object.name='Date'][callee.property.name='now']",
    message: 'Take the time from the injected Clock (src/sheet/clock.ts), not the device clock.',
  },
  {
    selector: "NewExpression[callee.name='Date'][arguments.length=0]",
    message: 'Take the time from the injected Clock (src/sheet/clock.ts): new Date(clock.now()).',
  },
];

const unsafeDirectives = {
  group: ['lit/directives/unsafe-*', 'lit-html/directives/unsafe-*'],
  message: 'unsafeHTML/unsafeSVG/unsafeMathML bypass escaping: build the markup with a Lit template instead.',
};
const mathjsOutsideEngine = {
  name: 'mathjs',
  message: 'Use mathjs only through the restricted instance in src/sheet/formula-engine.ts.',
};
/** Relative imports name the emitted file: `./model.js`, never `./model` or `./model.ts`. */
const relativeImportWithoutJs = {
  regex: '^\\.{1,2}/(?!.*\\.(js|mjs|json|css)$)',
  message: 'Relative imports end in `.js` (the file the build emits), e.g. `./model.js`.',
};

/** Page globals the DOM-free core must not touch (Node tests and the CLI share the core). */
const pageGlobals = ['window', 'document', 'navigator', 'location', 'localStorage', 'sessionStorage', 'customElements'].map((name) => ({
  name,
  message: 'The core has no DOM: pass what it needs in, or move this to a tm- element.',
}));

/**
 * A plugin's flat config by name (the plugins' types allow legacy and missing configs).
 * @param {import('eslint').ESLint.Plugin} plugin
 * @param {string} name
 * @returns {import('eslint').Linter.Config}
 */
function flatConfig(plugin, name) {
  const config = plugin.configs?.[name];
  if (config === undefined || Array.isArray(config)) throw new Error(`no flat config "${name}"`);
  return /** @type {import('eslint').Linter.Config} */ (config);
}

const TS = ['**/*.ts'];
const JS = ['**/*.js', '**/*.mjs'];
/** The DOM-free core (see DEVELOPERS.md, Architecture); elements (tm-*.ts) are the shell. */
const CORE = ['src/sheet/**/*.ts', 'src/goals/**/*.ts', 'src/export/**/*.ts', 'src/storage/**/*.ts', 'src/cli/**/*.ts'];
const ELEMENTS = ['**/tm-*.ts'];

export default defineConfig(
  globalIgnores(['dist/', 'coverage/', 'bench-results/', '.tmp/', 'tests/**/results/']),
  {
    linterOptions: { reportUnusedDisableDirectives: 'error' },
  },

  js.configs.recommended,
  tseslint.configs.recommendedTypeChecked,
  {
    languageOptions: {
      parserOptions: {
        // Type information from tsconfig.json (src, tests, scripts, bin and the configs).
        projectService: true,
        tsconfigRootDir: import.meta.dirname,
      },
    },
    rules: {
      // Faults the type-aware rules catch beyond the recommended set.
      '@typescript-eslint/switch-exhaustiveness-check': ['error', { considerDefaultExhaustiveForUnions: true }],
      // `return promise` inside try/catch skips the catch when the promise rejects.
      '@typescript-eslint/return-await': ['error', 'in-try-catch'],
      // "undefined", "null" or "true" printed into a note or a label is a fault; numbers are fine.
      '@typescript-eslint/restrict-template-expressions': [
        'error',
        { allowNumber: true, allowBoolean: false, allowNullish: false, allowAny: false, allowNever: false },
      ],
      '@typescript-eslint/no-deprecated': 'error',
      // An async function without `await` is harmless (often it implements a promise-returning
      // interface); the faults are floating and misused promises, caught above.
      '@typescript-eslint/require-await': 'off',
      eqeqeq: ['error', 'smart'],
      // tsc reports these already (noUnusedLocals, noUnusedParameters).
      '@typescript-eslint/no-unused-vars': 'off',
      'no-restricted-syntax': ['error', ...forbiddenSyntax],
      'no-restricted-imports': ['error', { paths: [mathjsOutsideEngine], patterns: [unsafeDirectives] }],
    },
  },

  // TypeScript sources: relative imports end in .js.
  {
    files: TS,
    rules: {
      'no-restricted-imports': ['error', { paths: [mathjsOutsideEngine], patterns: [unsafeDirectives, relativeImportWithoutJs] }],
    },
  },
  // The one module allowed to import mathjs.
  {
    files: ['src/sheet/formula-engine.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [unsafeDirectives, relativeImportWithoutJs] }],
    },
  },

  // The app: time comes from the injected Clock; only the entry and the CLI pick the device clock.
  {
    files: ['src/**/*.ts'],
    ignores: ['src/app/main.ts', 'src/cli/**'],
    rules: {
      'no-restricted-syntax': ['error', ...forbiddenSyntax, ...deviceClock],
    },
  },
  // The core has no DOM.
  {
    files: CORE,
    ignores: ELEMENTS,
    rules: {
      'no-restricted-globals': ['error', ...pageGlobals],
    },
  },

  // Lit elements and templates (src and the browser tests' pages).
  {
    files: ['src/**/*.ts', 'tests/**/*.ts'],
    settings: { wc: { elementBaseClasses: ['LitElement'] } },
    extends: [flatConfig(lit, 'flat/recommended'), flatConfig(wc, 'flat/best-practice')],
    rules: {
      // Faults in Lit code beyond the recommended set.
      // (Not lit/no-this-assign-in-render: it also flags assignments inside event-listener arrows,
      // which run later, not during render.)
      'lit/lifecycle-super': 'error',
      'lit/no-classfield-shadowing': 'error',
      'lit/no-invalid-escape-sequences': 'error',
      'lit/no-legacy-imports': 'error',
      'lit/no-value-attribute': 'error',
      'lit/value-after-constraints': 'error',
      // Lit's base class defines every lifecycle callback, so `super.connectedCallback()` needs no guard.
      'wc/guard-super-call': 'off',
      // Project convention: file named after its tag, class named after its tag (tm-grid, TmGrid).
      'wc/file-name-matches-element': ['error', { transform: 'kebab' }],
      'wc/tag-name-matches-class': 'error',
    },
  },

  // Plain-JS scripts, the bin, the configs: Node.
  {
    files: JS,
    languageOptions: { globals: { ...globals.node } },
  },
  // The service worker is checked with its own tsconfig (WebWorker library).
  {
    files: ['src/app/sw.js'],
    languageOptions: {
      globals: { ...globals.serviceworker },
      parserOptions: { projectService: false, project: './tsconfig.sw.json' },
    },
  },
);
