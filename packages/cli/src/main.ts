import { RecipeError, SolverError } from '@edgewise/solver2d';
import { mergeCommand, MERGE_USAGE } from './commands/merge.ts';
import { runCommand, RUN_USAGE } from './commands/run.ts';
import { schemaCommand, SCHEMA_USAGE } from './commands/schema.ts';
import { spacingCommand, SPACING_USAGE } from './commands/spacing.ts';
import { viewCommand, VIEW_USAGE } from './commands/view.ts';
import { sweepCommand, SWEEP_USAGE } from './commands/sweep.ts';
import { EnvironmentError, fileSystemError, InputError, UsageError } from './errors.ts';

type Command = (args: string[]) => number | Promise<number>;

/** Commands by name; each module owns its options and usage line. */
const COMMANDS: Record<string, { run: Command; usage: string }> = {
  run: { run: runCommand, usage: RUN_USAGE },
  schema: { run: schemaCommand, usage: SCHEMA_USAGE },
  spacing: { run: spacingCommand, usage: SPACING_USAGE },
  view: { run: viewCommand, usage: VIEW_USAGE },
  sweep: { run: sweepCommand, usage: SWEEP_USAGE },
  merge: { run: mergeCommand, usage: MERGE_USAGE },
};

function usage(): string {
  return ['usage:', ...Object.values(COMMANDS).map((c) => `  ${c.usage}`)].join('\n');
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
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    process.stdout.write(`${usage()}\n`);
    return name ? 0 : 2;
  }
  const command = COMMANDS[name];
  if (!command) {
    process.stderr.write(`edgewise: unknown command ${JSON.stringify(name)} (commands: ${Object.keys(COMMANDS).join(', ')})\n`);
    return 2;
  }
  try {
    return await command.run(rest);
  } catch (e) {
    if (e instanceof RecipeError) {
      process.stderr.write(`edgewise: bad recipe: ${e.message}\n`);
      return 2;
    }
    if (e instanceof UsageError || e instanceof InputError) {
      process.stderr.write(`edgewise: ${e.message}\n`);
      return 2;
    }
    if (e instanceof TypeError && (e as { code?: string }).code?.startsWith('ERR_PARSE_ARGS')) {
      process.stderr.write(`edgewise ${name}: ${parseArgsMessage(e)} (usage: ${command.usage})\n`);
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
