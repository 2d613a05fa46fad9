#!/usr/bin/env node
// Entry of the `tidemark` command (package.json "bin"). Registers tsx so Node can load the
// TypeScript sources directly, then runs src/cli/main.ts. Usage: `npx tidemark --help`.
import { register } from 'tsx/esm/api';

register();
const argv = process.argv.slice(2);
// --help needs none of the core: answer it without loading the goal engine and mathjs.
const { parseCliArgs, HELP_TEXT } = await import('../src/cli/args.ts');
if (parseCliArgs(argv).kind === 'help') {
  process.stdout.write(HELP_TEXT);
} else {
  const { run } = await import('../src/cli/main.ts');
  process.exitCode = run(argv);
}
