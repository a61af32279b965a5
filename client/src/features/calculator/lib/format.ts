import { round } from '@shared/calc';

const formatters = new Map<string, Intl.NumberFormat>();

function formatter(minDp: number, maxDp: number) {
  const key = `${minDp}:${maxDp}`;
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.NumberFormat('en-US', { minimumFractionDigits: minDp, maximumFractionDigits: maxDp });
    formatters.set(key, f);
  }
  return f;
}

/** Rounded once (half away from zero) to at most `dp` places, trailing zeros dropped: 62.5, 15, 3.75. */
export const upTo = (x: number, dp: number) => formatter(0, dp).format(round(x, dp));

/** Exactly `dp` places, for dimensions read off a table: 10.020. */
export const fixed = (x: number, dp: number) => formatter(dp, dp).format(round(x, dp));
