import { readFileSync } from 'node:fs';
import { EnvironmentError, fileSystemError, InputError, UsageError } from './errors.ts';
import { asksForHelp, helpText, type CommandSpec } from './help.ts';

type Command = (args: string[]) => number | Promise<number>;

/**
 * Commands by name, each loaded only when called (a module of its own in the bundle), so that
 * `run` does not pay for parsing what `sweep`, `view` or `schema` need; each module owns its
 * options, usage and help. `summary` is the line the top-level help gives it.
 */
const COMMANDS: Record<string, { load: () => Promise<{ run: Command; spec: CommandSpec }>; summary: string }> = {
  run: { load: async () => { const m = await import('./commands/run.ts'); return { run: m.runCommand, spec: m.RUN_SPEC }; }, summary: 'solve one recipe, print its results, write its run folder' },
  sweep: { load: async () => { const m = await import('./commands/sweep.ts'); return { run: m.sweepCommand, spec: m.SWEEP_SPEC }; }, summary: 'a batch over window widths and recipe values, in parallel, in shards' },
  spacing: { load: async () => { const m = await import('./commands/spacing.ts'); return { run: m.spacingCommand, spec: m.SPACING_SPEC }; }, summary: 'the narrowest masked stripe that keeps two junctions a gap apart' },
  merge: { load: async () => { const m = await import('./commands/merge.ts'); return { run: m.mergeCommand, spec: m.MERGE_SPEC }; }, summary: "join a sharded sweep's shards into one sweep.csv and sweep.json" },
  view: { load: async () => { const m = await import('./commands/view.ts'); return { run: m.viewCommand, spec: m.VIEW_SPEC }; }, summary: 'serve the viewer on 127.0.0.1 for a run or sweep folder' },
  schema: { load: async () => { const m = await import('./commands/schema.ts'); return { run: m.schemaCommand, spec: m.SCHEMA_SPEC }; }, summary: 'print the JSON Schema of a recipe or of report.json' },
};

/** The CLI package's version (package.json sits one level above both src/ and the bundle's dist/). */
export function version(): string {
  return (JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string }).version;
}

/** The top-level help: every command's usage line (each module loaded for it) and what it does. */
async function topHelp(): Promise<string> {
  const specs = await Promise.all(Object.values(COMMANDS).map(async (c) => ({ usage: (await c.load()).spec.usage, summary: c.summary })));
  return [
    'usage: edgewise COMMAND [ARGUMENTS] [OPTIONS]',
    '       edgewise COMMAND --help     what a command does, its options and their defaults',
    '',
    'Lateral diffusion under a mask edge, in 2D cross-sections (and 3D corners).',
    '',
    'commands:',
    ...specs.flatMap((c) => [`  ${c.usage}`, `      ${c.summary}`]),
    '',
    'options:',
    '  -h, --help     print this help and exit',
    '  -V, --version  print the version and exit',
    '',
  ].join('\n');
}

/**
 * node:util parseArgs errors in one line: its messages run to three sentences on three lines
 * ("Option '--out' argument is ambiguous.\nDid you forget …"); the first says what is wrong.
 */
export function parseArgsMessage(e: Error): string {
  const code = (e as { code?: string }).code;
  const option = /'(-[^' ]+)/.exec(e.message)?.[1];
  if (option && code === 'ERR_PARSE_ARGS_UNKNOWN_OPTION') return `unknown option ${option}`;
  if (option && /argument missing|is ambiguous/.test(e.message)) return `option ${option} needs a value; one that starts with "-" is written ${option}=-…`;
  if (option && /does not take an argument/.test(e.message)) return `option ${option} takes no value`;
  const first = e.message.split('\n')[0];
  const sentence = /^(.*?[^.])\.(\s|$)/.exec(first)?.[1] ?? first;
  return sentence.charAt(0).toLowerCase() + sentence.slice(1);
}

/** System calls that change the file system; a failure of any other is one of reading. */
const WRITING_CALLS = new Set(['mkdir', 'rename', 'write', 'unlink', 'rmdir', 'rm', 'copyfile', 'symlink', 'link', 'chmod', 'utime', 'ftruncate']);

/**
 * A file-system error that reached the top without a caller naming what it was doing
 * (files.ts and read-recipe.ts name it themselves), as one line from the path and system call
 * Node reports; null for any other error. ENOENT is left alone: a file the program expects
 * that is missing (its own bundle) is an internal failure, not bad input.
 */
export function strayFileSystemError(e: unknown): InputError | EnvironmentError | null {
  const err = e as NodeJS.ErrnoException | null;
  if (typeof err?.path !== 'string' || typeof err.syscall !== 'string' || err.code === 'ENOENT') return null;
  return fileSystemError(err, WRITING_CALLS.has(err.syscall) ? 'write' : 'read', err.path);
}

/** Runs one command; returns the exit code (0 ok, 2 bad input, 1 internal failure). */
export async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (name === '--version' || name === '-V') {
    process.stdout.write(`edgewise ${version()}\n`);
    return 0;
  }
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    (name ? process.stdout : process.stderr).write(await topHelp());
    return name ? 0 : 2;
  }
  const entry = COMMANDS[name];
  if (!entry) {
    process.stderr.write(`edgewise: unknown command ${JSON.stringify(name)} (commands: ${Object.keys(COMMANDS).join(', ')}; edgewise --help says what each does)\n`);
    return 2;
  }
  const command = await entry.load();
  if (asksForHelp(rest)) {
    process.stdout.write(helpText(command.spec));
    return 0;
  }
  try {
    return await command.run(rest);
  } catch (e) {
    // The solver's error classes, from the chunk the command has loaded already (main.mjs
    // itself stays small: --version and --help do not load the solver).
    const { RecipeError, SolverError } = await import('@edgewise/solver2d');
    if (e instanceof RecipeError) {
      process.stderr.write(`edgewise: bad recipe: ${e.message}\n`);
      return 2;
    }
    if (e instanceof UsageError || e instanceof InputError) {
      process.stderr.write(`edgewise: ${e.message}\n`);
      return 2;
    }
    if (e instanceof TypeError && (e as { code?: string }).code?.startsWith('ERR_PARSE_ARGS')) {
      process.stderr.write(`edgewise ${name}: ${parseArgsMessage(e)} (usage: ${command.spec.usage})\n`);
      return 2;
    }
    if (e instanceof SolverError) {
      process.stderr.write(`edgewise: solver failed: ${e.message}\n`);
      return 1;
    }
    const fileSystem = e instanceof EnvironmentError ? e : strayFileSystemError(e);
    if (fileSystem) {
      process.stderr.write(`edgewise: ${fileSystem.message}\n`);
      return fileSystem instanceof InputError ? 2 : 1;
    }
    process.stderr.write(`edgewise: internal error: ${(e as Error).stack ?? e}\n`);
    return 1;
  }
}
