import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { STEP_KINDS } from '../../packages/solver2d/src/index.ts';
import { edgewise, REPO } from '../support/cli.ts';

/** The README's recipe reference: from "## Recipes" to the next section. */
function recipeSection(): string {
  const readme = readFileSync(join(REPO, 'README.md'), 'utf8');
  const start = readme.indexOf('\n## Recipes\n');
  expect(start).toBeGreaterThan(0);
  const end = readme.indexOf('\n## ', start + 1);
  return readme.slice(start, end < 0 ? undefined : end);
}

type Node = { properties?: Record<string, Node>; items?: Node | Node[]; prefixItems?: Node[]; anyOf?: Node[]; oneOf?: Node[]; allOf?: Node[]; additionalProperties?: Node | boolean };

/** Every key the schema accepts below the top level, found by walking its JSON Schema. */
function nestedKeys(node: Node, out = new Set<string>()): Set<string> {
  for (const [key, child] of Object.entries(node.properties ?? {})) {
    out.add(key);
    nestedKeys(child, out);
  }
  const children = [
    ...(Array.isArray(node.items) ? node.items : node.items ? [node.items] : []),
    ...(node.prefixItems ?? []), ...(node.anyOf ?? []), ...(node.oneOf ?? []), ...(node.allOf ?? []),
    ...(typeof node.additionalProperties === 'object' ? [node.additionalProperties] : []),
  ];
  for (const c of children) nestedKeys(c, out);
  return out;
}

describe('the README documents every recipe key', () => {
  const section = recipeSection();
  // The JSON Schema the recipe parser is built from, as `edgewise schema recipe` prints it.
  const printed = edgewise(['schema', 'recipe']);
  expect(printed.code).toBe(0);
  const schema = JSON.parse(printed.stdout) as Node;
  // Words inside `code` spans: the only places the section names keys.
  const coded = new Set([...section.matchAll(/`([^`]+)`/g)].flatMap((m) => m[1].match(/[A-Za-z][\w-]*/g) ?? []));

  it('each top-level key has a row of its own in the recipe table', () => {
    const top = Object.keys(schema.properties ?? {});
    expect(top).toEqual(expect.arrayContaining(['schema', 'title', 'steps', 'substrate']));
    for (const key of top) expect(section, `README recipe table row for "${key}"`).toMatch(new RegExp(`^\\| \`${key}(\\.[\\w.]+)?\` \\|`, 'm'));
  });

  it('each key below it (a step\'s kind, a window, a mesh option, …) is named in the section', () => {
    const keys = new Set<string>();
    for (const child of Object.values(schema.properties ?? {})) nestedKeys(child, keys);
    expect(keys).toContain('kind');
    expect(keys).toContain('surfaceConcentrationCm3');
    const missing = [...keys].filter((k) => !coded.has(k));
    expect(missing, 'recipe keys the README does not name').toEqual([]);
  });

  it('each kind of step has its own entry', () => {
    for (const kind of STEP_KINDS) expect(section).toContain(`\`${kind}\``);
  });
});
