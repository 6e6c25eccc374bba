import { UsageError } from '../errors.ts';

/** Most values one swept parameter may take; the whole sweep has its own limit. */
export const MAX_VALUES = 10_000;

const SYNTAX = 'a range start:step:stop such as 0.5:0.5:8, or a list such as 1,2,4,8';

/**
 * Values of one swept parameter: a range "start:step:stop" (both ends included when the
 * steps land on them), a list "1,2,4,8", a single number, or, from a recipe's own `sweep`
 * key, an array of numbers. `label` names the option or key in every error.
 */
export function parseValues(input: string | readonly number[], label: string): number[] {
  const values = typeof input === 'string' ? parseText(input.trim(), label) : [...input];
  if (values.length === 0) throw new UsageError(`${label}: lists no values (expected ${SYNTAX})`);
  if (values.length > MAX_VALUES) throw new UsageError(`${label}: gives ${values.length} values, more than the ${MAX_VALUES} one parameter may take`);
  values.forEach((v) => {
    if (!Number.isFinite(v)) throw new UsageError(`${label}: ${v} is not a finite number (expected ${SYNTAX})`);
  });
  const seen = new Set<number>();
  for (const v of values) {
    if (seen.has(v)) throw new UsageError(`${label}: lists ${v} twice (each value once)`);
    seen.add(v);
  }
  return values;
}

function parseText(text: string, label: string): number[] {
  const quoted = JSON.stringify(text);
  if (text === '') throw new UsageError(`${label}: is empty (expected ${SYNTAX})`);
  if (text.includes(':')) {
    const parts = text.split(':');
    if (parts.length !== 3) throw new UsageError(`${label} ${quoted}: a range has three parts, start:step:stop (e.g. 0.5:0.5:8)`);
    const [start, step, stop] = parts.map((p, k) => number(p, `${label} ${quoted}: the ${['start', 'step', 'stop'][k]}`));
    return range(start, step, stop, `${label} ${quoted}`);
  }
  return text.split(',').map((p, k) => number(p, `${label} ${quoted}: item ${k + 1}`));
}

function number(text: string, what: string): number {
  const t = text.trim();
  // Number('') is 0 and Number('0x10') is 16; accept plain decimal notation only.
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t)) throw new UsageError(`${what} ${JSON.stringify(t)} is not a number (expected ${SYNTAX})`);
  return Number(t);
}

/**
 * Twelve significant digits: 0.1 + 2·0.1 prints as 0.3, not 0.30000000000000004, and window
 * coordinates stay free of binary noise (4, not 3.9999999999).
 */
export function tidy(v: number): number {
  return Number(v.toPrecision(12));
}

function range(start: number, step: number, stop: number, what: string): number[] {
  if (step === 0) throw new UsageError(`${what}: the step must not be 0 (a range is start:step:stop, e.g. 0.5:0.5:8)`);
  if ((stop - start) * step < 0) {
    throw new UsageError(`${what}: a step of ${step} never gets from ${start} to ${stop} (use a ${step > 0 ? 'negative' : 'positive'} step, or swap start and stop)`);
  }
  // The small allowance keeps the stop value when rounding leaves it a hair beyond the last step.
  const count = Math.floor((stop - start) / step + 1e-9) + 1;
  if (count > MAX_VALUES) throw new UsageError(`${what}: gives ${count} values, more than the ${MAX_VALUES} one parameter may take`);
  return Array.from({ length: count }, (_, k) => tidy(start + k * step));
}
