/** Progress lines on standard error, so the table on standard output stays clean. */

const started = Date.now();

function stamp(): string {
  const s = (Date.now() - started) / 1000;
  return `[${s.toFixed(1).padStart(6)} s]`;
}

/** One line saying what the bench is doing now. */
export function say(message: string): void {
  process.stderr.write(`${stamp()} ${message}\n`);
}

/** A heading for one benchmark. */
export function heading(title: string): void {
  process.stderr.write(`\n${stamp()} == ${title}\n`);
}

/**
 * Reports progress through a long job at most every `everyMs`, and once at the end.
 * Returns a function to call with the count done so far.
 */
export function progressReporter(
  label: string,
  total: number,
  unit: string,
  everyMs = 2_000,
): (done: number) => void {
  const t0 = Date.now();
  let last = t0;
  return (done: number) => {
    const now = Date.now();
    if (done < total && now - last < everyMs) return;
    last = now;
    const pct = ((100 * done) / total).toFixed(0).padStart(3);
    const rate = done / Math.max(0.001, (now - t0) / 1000);
    const left =
      done > 0 && done < total ? `, about ${Math.ceil((total - done) / rate)} s left` : "";
    say(
      `  ${label}: ${pct} % (${done.toLocaleString("en-US")} of ${total.toLocaleString("en-US")} ${unit}, ${Math.round(rate).toLocaleString("en-US")} ${unit}/s${left})`,
    );
  };
}
