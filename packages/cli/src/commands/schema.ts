import { toJSONSchema } from 'zod/mini';
import { recipeSchema, RECIPE_SCHEMA_ID } from '@edgewise/solver2d';
import { reportJsonSchema } from '@edgewise/solver2d/report-schema';
import { UsageError } from '../errors.ts';
import { HELP_OPTION, type CommandSpec } from '../help.ts';

export const SCHEMA_USAGE = 'edgewise schema recipe|report';

export const SCHEMA_SPEC = {
  usage: SCHEMA_USAGE,
  summary: 'Prints a JSON Schema on stdout, for an editor to check and complete files with.',
  arguments: [['recipe', 'the schema of a recipe (edgewise.recipe/1)'], ['report', 'the schema of report.json (edgewise.report/1)']],
  options: { ...HELP_OPTION },
} as const satisfies CommandSpec;

/** The JSON Schemas this command prints, by name. */
const SCHEMAS: Record<string, () => Record<string, unknown>> = {
  recipe: () => ({ $id: RECIPE_SCHEMA_ID, title: 'Edgewise recipe', ...toJSONSchema(recipeSchema) }),
  report: reportJsonSchema,
};

/** Prints a JSON Schema so editors can check and complete files. */
export function schemaCommand(args: string[]): number {
  const [which, ...extra] = args;
  const make = which === undefined ? undefined : SCHEMAS[which];
  if (!make || extra.length > 0) throw new UsageError(`schema takes one of: ${Object.keys(SCHEMAS).join(', ')} (usage: ${SCHEMA_USAGE})`);
  process.stdout.write(`${JSON.stringify(make(), null, 2)}\n`);
  return 0;
}
