import { createHash } from 'node:crypto';

/** JSON with object keys sorted at every level: the same recipe always hashes the same. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) => {
    if (v === null || typeof v !== 'object' || Array.isArray(v)) return v;
    return Object.fromEntries(Object.keys(v).sort().map((k) => [k, (v as Record<string, unknown>)[k]]));
  });
}

export function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** The identity of a run's recipe, however its keys are ordered or indented. */
export function recipeSha256(recipe: unknown): string {
  return sha256(canonicalJson(recipe));
}
