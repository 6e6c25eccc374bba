/**
 * Progress on stderr: a redrawn line on a terminal; on anything else a plain line at most
 * every few seconds, so logs stay readable. Nothing at all for work that ends quickly.
 * The CLI writes no colour; its only terminal codes are this redraw.
 */
export interface ProgressReporter {
  update(fraction: number, note?: string): void;
  done(): void;
}

const QUIET_FOR_MS = 500;

/**
 * Whether `stream` may be drawn on with terminal codes (carriage return, erase line): only a
 * terminal, and not when NO_COLOR is set (https://no-color.org: a non-empty value) or TERM is
 * `dumb`, which ask for plain text.
 */
export function drawsOnTerminal(stream: { isTTY?: boolean }, env: NodeJS.ProcessEnv = process.env): boolean {
  return stream.isTTY === true && !env.NO_COLOR && env.TERM !== 'dumb';
}
const PLAIN_EVERY_MS = 5000;

export function progressReporter(stream: Pick<NodeJS.WriteStream, 'isTTY' | 'write'> | null, label: string, env: NodeJS.ProcessEnv = process.env): ProgressReporter {
  if (!stream) return { update() {}, done() {} };
  const start = performance.now();
  const tty = drawsOnTerminal(stream, env);
  let last = 0;
  let drawn = false;
  return {
    update(fraction, note) {
      const now = performance.now();
      if (now - start < QUIET_FOR_MS) return;
      if (!tty && now - last < PLAIN_EVERY_MS) return;
      if (tty && now - last < 100) return;
      last = now;
      const pct = Math.min(100, Math.max(0, fraction * 100));
      const elapsed = (now - start) / 1000;
      const eta = fraction > 0 ? (elapsed * (1 - fraction)) / fraction : NaN;
      const text = `${label} ${pct.toFixed(0).padStart(3)}%  ${elapsed.toFixed(1)} s elapsed${Number.isFinite(eta) ? `, about ${eta.toFixed(1)} s left` : ''}${note ? `  ${note}` : ''}`;
      if (tty) {
        const width = 24;
        const filled = Math.round((pct / 100) * width);
        stream.write(`\r[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${text}\x1b[K`);
        drawn = true;
      } else {
        stream.write(`${text}\n`);
      }
    },
    done() {
      if (drawn) stream.write('\r\x1b[K');
    },
  };
}
