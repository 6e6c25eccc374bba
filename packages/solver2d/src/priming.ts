/*
 * Priming: each hot loop is run a few times on tiny data before real work, once per thread.
 */

/**
 * Calls to make of each hot loop before real work: V8 gives a function its type feedback only
 * after several calls (8 in Node 20's engine; 32 leaves room), and a loop compiled mid-call
 * (on-stack replacement) before the code after it has run with feedback can give up at that
 * code on every later call, run interpreted and box every number. Seen without it in about
 * 1 process in 6 solving the base-resistor example 10 times: 880 deoptimisations of one loop,
 * or 1.6 GB allocated where 30 MB is usual (check with `node --trace-deopt --trace-gc`).
 */
export const PRIMING_CALLS = 32;

const primed = new Set<() => void>();

/** Runs `prime` the first time it is passed in this thread (each primer loops PRIMING_CALLS times itself). */
export function primeOnce(prime: () => void): void {
  if (primed.has(prime)) return;
  primed.add(prime);
  prime();
}
