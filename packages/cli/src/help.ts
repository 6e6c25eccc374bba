/**
 * What each command says to `--help`: its usage, what it does, its arguments and every option
 * with its default. A command's option table is the one node:util parseArgs reads (it ignores
 * the `value`, `help` and `defaultText` keys), so an option cannot be accepted without a line
 * of help.
 */

/** One option as parseArgs reads it, with its help line. */
export interface OptionSpec {
  readonly type: 'string' | 'boolean';
  readonly multiple?: boolean;
  readonly short?: string;
  readonly default?: string | boolean | string[];
  /** what the value looks like in the help: `DIR`, `N`, `0|1|2` */
  readonly value?: string;
  readonly help: string;
  /** the default in words; left out where the option has none */
  readonly defaultText?: string;
}

export interface CommandSpec {
  readonly usage: string;
  /** one sentence: what the command does */
  readonly summary: string;
  /** the positional arguments and what each is */
  readonly arguments: readonly (readonly [string, string])[];
  readonly options: Readonly<Record<string, OptionSpec>>;
}

/** Every command takes these; main.ts answers them before the command's own parser runs. */
export const HELP_OPTION = {
  help: { type: 'boolean', short: 'h', help: 'print this help and exit' },
} as const satisfies Record<string, OptionSpec>;

/** True when `args` ask for help (before a `--` that ends the options). */
export function asksForHelp(args: readonly string[]): boolean {
  for (const a of args) {
    if (a === '--') return false;
    if (a === '--help' || a === '-h') return true;
  }
  return false;
}

const WIDTH = 100;

/** `text` broken into lines of at most WIDTH characters, each after `indent` spaces. */
function wrap(text: string, indent: number): string {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(' ')) {
    if (line && indent + line.length + 1 + word.length > WIDTH) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  lines.push(line);
  return lines.map((l) => `${' '.repeat(indent)}${l}`).join('\n');
}

export function helpText(spec: CommandSpec): string {
  const parts = [`usage: ${spec.usage}`, '', wrap(spec.summary, 0)];
  if (spec.arguments.length > 0) {
    parts.push('', 'arguments:');
    for (const [name, what] of spec.arguments) parts.push(`  ${name}`, wrap(what, 6));
  }
  parts.push('', 'options:');
  for (const [name, o] of Object.entries(spec.options)) {
    const head = `  ${o.short ? `-${o.short}, ` : ''}--${name}${o.value ? ` ${o.value}` : ''}${o.multiple ? ' (may be repeated)' : ''}`;
    parts.push(head, wrap(`${o.help}${o.defaultText ? ` (default: ${o.defaultText})` : ''}`, 6));
  }
  return `${parts.join('\n')}\n`;
}
