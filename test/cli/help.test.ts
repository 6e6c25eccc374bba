import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MERGE_SPEC } from '../../packages/cli/src/commands/merge.ts';
import { RUN_SPEC } from '../../packages/cli/src/commands/run.ts';
import { SCHEMA_SPEC } from '../../packages/cli/src/commands/schema.ts';
import { SPACING_SPEC } from '../../packages/cli/src/commands/spacing.ts';
import { SWEEP_SPEC } from '../../packages/cli/src/commands/sweep.ts';
import { VIEW_SPEC } from '../../packages/cli/src/commands/view.ts';
import type { CommandSpec } from '../../packages/cli/src/help.ts';
import { edgewise, REPO } from '../support/cli.ts';

// The option tables below are the very objects each command hands to node:util parseArgs, so
// an option added to a parser without help fails here.
const COMMANDS: [string, CommandSpec][] = [
  ['run', RUN_SPEC], ['sweep', SWEEP_SPEC], ['spacing', SPACING_SPEC], ['merge', MERGE_SPEC], ['view', VIEW_SPEC], ['schema', SCHEMA_SPEC],
];

/** The help text an option's lines hold, from `--name` to the next option's line. */
function optionBlock(help: string, name: string): string {
  const lines = help.split('\n');
  const start = lines.findIndex((l) => new RegExp(`^  (-\\w, )?--${name}( |$)`).test(l));
  if (start < 0) return '';
  const end = lines.findIndex((l, k) => k > start && /^ {2}\S/.test(l));
  return lines.slice(start, end < 0 ? undefined : end).join(' ').replace(/\s+/g, ' ');
}

describe('--help', () => {
  for (const [name, spec] of COMMANDS) {
    it(`edgewise ${name} --help prints its usage and every option its parser accepts, with the default`, () => {
      for (const flag of ['--help', '-h']) {
        const r = edgewise([name, flag]);
        expect(r.code, r.stderr).toBe(0);
        expect(r.stderr).toBe('');
        expect(r.stdout).toContain(`usage: ${spec.usage}`);
        for (const [option, o] of Object.entries(spec.options)) {
          const block = optionBlock(r.stdout, option);
          expect(block, `--${option} in ${name}'s help`).not.toBe('');
          expect(block).toContain(o.help.replace(/\s+/g, ' ').slice(0, 40));
          // An option that parseArgs gives a default must say what it is.
          if (o.default !== undefined || o.defaultText !== undefined) expect(block, `--${option}'s default`).toMatch(/\(default: [^)]+/);
          if (o.defaultText !== undefined) expect(block).toContain(`default: ${o.defaultText}`);
        }
      }
    });
  }

  it('asks for help anywhere in the arguments, but not after --', () => {
    const r = edgewise(['run', 'examples/base-resistor.json', '--out', 'x', '--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('usage: edgewise run RECIPE');
    const after = edgewise(['run', '--', '--help']);
    expect(after.code).toBe(2);
  });

  it('edgewise --help lists every command with its usage; no command at all prints it on stderr with exit code 2', () => {
    const r = edgewise(['--help']);
    expect(r.code).toBe(0);
    for (const [, spec] of COMMANDS) expect(r.stdout).toContain(spec.usage);
    expect(r.stdout).toMatch(/--version/);
    const bare = edgewise([]);
    expect(bare.code).toBe(2);
    expect(bare.stderr).toContain('usage: edgewise COMMAND');
  });
});

describe('--version', () => {
  it('prints the version of packages/cli/package.json, as --version and -V', () => {
    const { version } = JSON.parse(readFileSync(join(REPO, 'packages', 'cli', 'package.json'), 'utf8')) as { version: string };
    expect(version).toMatch(/^\d+\.\d+\.\d+/);
    for (const flag of ['--version', '-V']) {
      const r = edgewise([flag]);
      expect(r.code).toBe(0);
      expect(r.stdout).toBe(`edgewise ${version}\n`);
    }
  });
});
