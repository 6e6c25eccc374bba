import { toJSONSchema } from 'zod/mini';
import { recipeSchema } from '@edgewise/solver2d';
import { UsageError } from '../errors.ts';

/**
 * Recipe paths such as `steps[1].minutes` or `dopants.Q.D0Cm2PerS`: parsing, checking that
 * one names a numeric field (using the recipe's own JSON Schema, so new fields work without
 * a list here), and setting a value there.
 */
export type Segment = string | number;

// The JSON Schema is plain data; only the few keywords walked below are typed.
interface SchemaNode {
  type?: string | string[];
  const?: unknown;
  properties?: Record<string, SchemaNode>;
  additionalProperties?: SchemaNode | boolean;
  items?: SchemaNode | boolean;
  prefixItems?: SchemaNode[];
  anyOf?: SchemaNode[];
  oneOf?: SchemaNode[];
}

let rootSchema: SchemaNode | null = null;
function schemaRoot(): SchemaNode {
  rootSchema ??= toJSONSchema(recipeSchema) as SchemaNode;
  return rootSchema;
}

export function formatPath(segments: readonly Segment[]): string {
  let out = '';
  for (const s of segments) out += typeof s === 'number' ? `[${s}]` : out ? `.${s}` : s;
  return out || 'recipe';
}

/** Names that would reach an object's prototype rather than a field of the recipe. */
const RESERVED = new Set(['__proto__', 'constructor', 'prototype']);

/** `name(.name|[index])*`; names are letters, digits, "_" and "-" (dopant names may hold "-"). */
export function parsePath(text: string, label: string): Segment[] {
  const segments: Segment[] = [];
  const token = /^(?:\.?([A-Za-z_][A-Za-z0-9_-]*)|\[(\d+)\])/;
  let rest = text.trim();
  const bad = () => new UsageError(`${label}: ${JSON.stringify(text)} is not a recipe path (write it like steps[1].minutes or crossSection.widthUm)`);
  if (!/^[A-Za-z_]/.test(rest)) throw bad();
  while (rest.length > 0) {
    const m = token.exec(rest);
    if (!m) throw bad();
    if (m[1] !== undefined && RESERVED.has(m[1])) throw new UsageError(`${label}: ${JSON.stringify(m[1])} cannot be part of a recipe path`);
    segments.push(m[1] !== undefined ? m[1] : Number(m[2]));
    rest = rest.slice(m[0].length);
  }
  return segments;
}

function typesOf(node: SchemaNode): string[] {
  return node.type === undefined ? [] : Array.isArray(node.type) ? node.type : [node.type];
}

function isNumeric(node: SchemaNode): boolean {
  return typesOf(node).some((t) => t === 'number' || t === 'integer');
}

function own<T>(record: Record<string, T> | undefined, key: string): T | undefined {
  return record !== undefined && Object.hasOwn(record, key) ? record[key] : undefined;
}

function kindOf(value: unknown): string {
  if (Array.isArray(value)) return 'array';
  if (value === null) return 'null';
  return typeof value === 'object' ? 'object' : typeof value;
}

/**
 * Picks the branch of a union that describes `value`: the one whose `kind` constant matches
 * (steps), else the first whose type fits; with no value yet, prefer a numeric branch, then an object.
 */
function branch(node: SchemaNode, value: unknown): SchemaNode {
  const options = node.oneOf ?? node.anyOf;
  if (!options) return node;
  const resolved = options.map((o) => branch(o, value));
  if (value === undefined) return resolved.find(isNumeric) ?? resolved.find((o) => typesOf(o).includes('object')) ?? resolved[0];
  const kind = kindOf(value);
  const fits = resolved.filter((o) => typesOf(o).some((t) => t === kind || (kind === 'number' && t === 'integer')));
  if (kind === 'object' && typeof (value as { kind?: unknown }).kind === 'string') {
    const tagged = fits.find((o) => o.properties?.kind?.const === (value as { kind: string }).kind);
    if (tagged) return tagged;
  }
  return fits[0] ?? resolved[0];
}

/** Whether some numeric field can be reached below this node (a few levels suffice). */
function holdsNumbers(node: SchemaNode, depth = 4): boolean {
  const options = node.oneOf ?? node.anyOf;
  if (options) return options.some((o) => holdsNumbers(o, depth));
  if (isNumeric(node)) return true;
  if (depth === 0) return false;
  const children: SchemaNode[] = [
    ...Object.values(node.properties ?? {}),
    ...(typeof node.additionalProperties === 'object' ? [node.additionalProperties] : []),
    ...(typeof node.items === 'object' ? [node.items] : []),
    ...(node.prefixItems ?? []),
  ];
  return children.some((c) => holdsNumbers(c, depth - 1));
}

function describeObject(at: string, value: unknown): string {
  const kind = (value as { kind?: unknown } | undefined)?.kind;
  return typeof kind === 'string' ? `${at} (a ${kind} step)` : at;
}

/**
 * Checks that `segments` lead to a numeric field of `recipe` (present, or optional and
 * absent); throws one line naming the path and the fields allowed where it went wrong.
 */
export function checkNumericPath(recipe: unknown, segments: readonly Segment[], label: string): void {
  const path = formatPath(segments);
  const fail = (why: string) => new UsageError(`${label}: unknown recipe path ${JSON.stringify(path)}: ${why}`);
  if (segments[0] === 'sweep') throw fail('a sweep cannot set its own "sweep" key');
  let node = schemaRoot();
  let value: unknown = recipe;
  for (let k = 0; k < segments.length; k++) {
    const seg = segments[k];
    const at = formatPath(segments.slice(0, k));
    node = branch(node, value);
    if (typeof seg === 'string') {
      if (!typesOf(node).includes('object') || (value !== undefined && kindOf(value) !== 'object')) {
        throw fail(`${at} is not an object with named fields`);
      }
      const child = own(node.properties, seg) ?? (typeof node.additionalProperties === 'object' ? node.additionalProperties : undefined);
      if (!child || !holdsNumbers(child)) {
        const named = Object.entries(node.properties ?? {})
          .filter(([n, c]) => holdsNumbers(c) && !(k === 0 && n === 'sweep'))
          .map(([n]) => n);
        const keys = typeof node.additionalProperties === 'object' && value !== undefined ? Object.keys(value as object) : [];
        const allowed = [...named, ...keys];
        throw fail(`${describeObject(at, value)} has no field ${JSON.stringify(seg)} that holds numbers (allowed: ${allowed.join(', ') || 'none'})`);
      }
      node = child;
      value = value === undefined ? undefined : own(value as Record<string, unknown>, seg);
    } else {
      if (!Array.isArray(value)) throw fail(value === undefined ? `${at} is not in the recipe, so ${at}[${seg}] cannot be set` : `${at} is not a list`);
      if (seg >= value.length) throw fail(`${at} has ${value.length} item${value.length === 1 ? '' : 's'} (indices 0 to ${value.length - 1})`);
      const child = node.prefixItems?.[seg] ?? (typeof node.items === 'object' ? node.items : undefined);
      if (!child) throw fail(`${at} has no item ${seg}`);
      node = child;
      value = value[seg];
    }
  }
  node = branch(node, value);
  if (Array.isArray(value)) throw fail(`it holds a list; set its items, e.g. ${path}[0]`);
  if (!isNumeric(node) || (value !== undefined && typeof value !== 'number')) {
    throw fail(`it is not a numeric field${value === undefined ? '' : ` (it holds ${JSON.stringify(value)})`}`);
  }
}

/** Sets a value at a checked path, creating the objects on the way that are not there yet. */
export function setAt(target: Record<string, unknown>, segments: readonly Segment[], value: number): void {
  let node: Record<string | number, unknown> = target;
  for (let k = 0; k < segments.length - 1; k++) {
    const seg = segments[k];
    if (!Object.hasOwn(node, seg)) node[seg] = {};
    node = node[seg] as Record<string | number, unknown>;
  }
  node[segments[segments.length - 1]] = value;
}
