import { readFileSync, statSync } from 'node:fs';
import { extname } from 'node:path';
import { parse as parseYaml } from 'yaml';
import { InputError } from './errors.ts';

/** Largest recipe file accepted; a recipe is a few kilobytes. */
export const MAX_RECIPE_BYTES = 1 << 20;

/** Reads a recipe file (JSON, or YAML for .yaml/.yml) into plain data. */
export function readRecipeFile(path: string): unknown {
  let stat;
  try {
    stat = statSync(path);
  } catch {
    throw new InputError(`${path}: no such recipe file`);
  }
  if (stat.isDirectory()) throw new InputError(`${path}: is a folder, not a recipe file`);
  if (stat.size > MAX_RECIPE_BYTES) throw new InputError(`${path}: ${stat.size} bytes is larger than a recipe can be (at most ${MAX_RECIPE_BYTES})`);
  const bytes = readFileSync(path);
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw new InputError(`${path}: is not UTF-8 text`);
  }
  if (text.trim() === '') throw new InputError(`${path}: is empty`);
  const yaml = ['.yaml', '.yml'].includes(extname(path).toLowerCase());
  try {
    return yaml ? parseYaml(text, { maxAliasCount: 100 }) : JSON.parse(text);
  } catch (e) {
    const reason = (e as Error).message.split('\n')[0];
    throw new InputError(`${path}: is not valid ${yaml ? 'YAML' : 'JSON'}: ${reason}`);
  }
}
