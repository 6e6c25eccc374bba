import { existsSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { InputError, UsageError } from '../errors.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';
import { ensureViewerBuilt, viewerRoot } from '../view-build.ts';
import { startViewServer } from '../view-server.ts';

export const VIEW_USAGE = 'edgewise view DIR [--recipe FILE] [--port N]';

export const VIEW_SPEC = {
  usage: VIEW_USAGE,
  summary: 'Serves the viewer and the folder on 127.0.0.1 (building the viewer on first use), prints the address to open, and runs until Ctrl-C.',
  arguments: [['DIR', 'a run folder, a sweep folder or a folder of runs']],
  options: {
    recipe: { type: 'string', value: 'FILE', help: 'the recipe the live re-run starts from', defaultText: "the folder's recipe.json" },
    port: { type: 'string', value: 'N', help: 'the port to listen on, 0 to 65535 (0: any free port)', defaultText: '0' },
    ...HELP_OPTION,
  },
} as const satisfies CommandSpec;

/**
 * Serves the viewer and one run or sweep folder on 127.0.0.1, prints the address, and runs
 * until interrupted. --recipe gives the live mode its starting recipe.
 */
export async function viewCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseArgs({ args, allowPositionals: true, strict: true, options: VIEW_SPEC.options });
  if (positionals.length !== 1) throw new UsageError(`view takes one run or sweep folder (usage: ${VIEW_USAGE})`);
  const dir = positionals[0];
  if (!existsSync(dir) || !statSync(dir).isDirectory()) throw new InputError(`view: ${dir} is not a folder (give a run or sweep folder)`);
  if (values.recipe !== undefined && (!existsSync(values.recipe) || !statSync(values.recipe).isFile())) {
    throw new InputError(`--recipe: ${values.recipe} is not a file`);
  }
  let port = 0;
  if (values.port !== undefined) {
    port = Number(values.port);
    if (!Number.isInteger(port) || port < 0 || port > 65535) throw new UsageError(`--port: must be a whole number from 0 to 65535 (0 = any free port), got ${JSON.stringify(values.port)}`);
  }
  // Listen first, so that a port in use is said at once, not after a build of the viewer.
  const { server, url } = await startViewServer({ dataDir: dir, viewerDir: join(viewerRoot(), 'dist'), recipePath: values.recipe ?? null, port });
  try {
    await ensureViewerBuilt({ log: (line) => process.stderr.write(`${line}\n`) });
  } catch (e) {
    server.close();
    throw e;
  }
  process.stdout.write(`edgewise view: serving ${dir} at ${url} (Ctrl-C to stop)\n`);
  return new Promise<number>((resolve) => {
    const stop = () => {
      server.close(() => resolve(0));
      server.closeAllConnections();
    };
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
}
