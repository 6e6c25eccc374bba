/**
 * The latest object of each kind the solver's hot code reads, kept until the next one.
 *
 * V8 keeps an object layout (a hidden class) only while some object has it. Where none is
 * alive at a full collection (in a sweep worker, between one run's solve and the next),
 * the layout is dropped, every function optimised for it is thrown away (`node --trace-deopt`
 * says "weak objects", or "wrong map" where the next objects get a new layout) and compiled
 * again. Keeping the latest object of each kind costs one solve's buffers, which the next
 * solve replaces. `kind` defaults to the object's class; plain objects need a name of their own.
 */
const latest = new Map<unknown, object>();

export function keepLayout<T extends object>(o: T, kind: unknown = o.constructor): T {
  latest.set(kind, o);
  return o;
}

/**
 * `items.map(f)`, built by push. An array that Array.prototype.map makes in optimised code
 * has holey elements, one made by the interpreter packed ones: code compiled on the one
 * meets the other with a "wrong map" and is thrown away (simulate, once per sweep worker).
 */
export function packedMap<T, U>(items: readonly T[], f: (item: T) => U): U[] {
  const out: U[] = [];
  for (const item of items) out.push(f(item));
  return out;
}
