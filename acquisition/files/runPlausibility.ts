/**
 * What a run read from a file must look like before it is worth fitting: times that
 * advance, after time zero, within any run's length, and absorbances that are not all
 * below the blank. Each failure is one sentence (what, where, what to do); the readings
 * are never changed here. Single readings that are wrong are the file reader's matter
 * (runCsv.ts, journalReader.ts); this looks at the run as a whole.
 */

/** Longer than any kinetics run (about three years): a span past it is a wrong time column or unit. */
export const LONGEST_RUN_S = 1e8;
/**
 * Every absorbance below this means the blank absorbed more than the sample: the blank
 * and the sample cuvettes swapped, or a blank taken on the reaction mixture. A few
 * milli-absorbance below zero is ordinary noise and baseline drift (common practice).
 */
export const SWAPPED_BLANK_AU = -0.05;

/** The sentence for a run that cannot be analysed as it is, or null. `file` names it. */
export function runProblem(time_s: ArrayLike<number>, absorbance: ArrayLike<number>, file: string): string | null {
  const n = time_s.length;
  if (n === 0) return null;
  const first = time_s[0]!;
  const last = time_s[n - 1]!;
  if (n > 1 && last === first) {
    return `${file}: every reading is at the same time (${first} s), so the time column does not advance; check that it holds each reading's time in seconds.`;
  }
  if (last < 0) {
    return `${file}: every reading is before time zero (from ${first} s to ${last} s), but times are seconds after mixing; shift them so that mixing is at 0 s.`;
  }
  if (last - first > LONGEST_RUN_S) {
    return `${file}: the readings span ${(last - first).toPrecision(3)} s, longer than any run (${LONGEST_RUN_S.toExponential(0)} s is about three years); check the time column and that it is in seconds.`;
  }
  let highest = -Infinity;
  let lowest = Infinity;
  for (let i = 0; i < n; i++) {
    highest = Math.max(highest, absorbance[i]!);
    lowest = Math.min(lowest, absorbance[i]!);
  }
  if (highest < SWAPPED_BLANK_AU) {
    return `${file}: every absorbance is below ${SWAPPED_BLANK_AU} AU (${fmt(lowest)} to ${fmt(highest)} AU), so the blank absorbed more than the sample, as when the blank and the sample cuvettes are swapped; take the blank again with the solvent alone and measure the run again.`;
  }
  return null;
}

function fmt(a: number): string {
  return a.toFixed(3);
}
