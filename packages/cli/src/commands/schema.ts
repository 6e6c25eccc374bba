import { z } from 'zod';
import { recipeSchema, RECIPE_SCHEMA_ID } from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';

export const SCHEMA_USAGE = 'edgewise schema recipe';

/** Prints a JSON Schema so editors can check and complete files. */
export function schemaCommand(args: string[]): number {
  const [which, ...extra] = args;
  if (which !== 'recipe' || extra.length > 0) throw new UsageError(`schema takes one of: recipe (usage: ${SCHEMA_USAGE})`);
  const schema = { $id: RECIPE_SCHEMA_ID, title: 'Edgewise recipe', ...z.toJSONSchema(recipeSchema) };
  process.stdout.write(`${JSON.stringify(schema, null, 2)}\n`);
  return 0;
}
