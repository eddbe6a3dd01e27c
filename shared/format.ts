/**
 * Number formatting shared by the CLI tables, summary.md and the viewer: a value with its uncertainty,
 * rounded to what the uncertainty allows.
 *
 * Rule (common practice, no single source): the uncertainty keeps two significant digits when its
 * leading digit is 1 or 2, otherwise one; the value is rounded to the same decimal place. Very large
 * or small magnitudes share one power of ten: "(1.250 ± 0.052)e8".
 */

export interface FormatOptions {
  /** Significant digits for a value without a usable uncertainty. Default: 4. */
  digits?: number;
  /** Separator between value and uncertainty. Default: ' ± '. */
  plusMinus?: string;
  /** Below this magnitude (and above 1/this) no exponent is used. Default: 1e5. */
  plainBelow?: number;
}

/** Decimal exponent of the leading digit: 0.034 → −2, 512 → 2. */
function leadingExponent(x: number): number {
  return Math.floor(Math.log10(Math.abs(x)));
}

/** Significant digits an uncertainty keeps under the rule above. */
export function uncertaintyDigits(err: number): number {
  const scaled = Math.abs(err) / 10 ** leadingExponent(err);
  // Round first so that 2.96 (→ 3.0) keeps one digit like 3.
  return Number(scaled.toPrecision(2)) < 3 ? 2 : 1;
}

/** A value alone, to `digits` significant figures, exponent form outside the plain range. */
export function formatNumber(value: number, options: FormatOptions = {}): string {
  const digits = options.digits ?? 4;
  const plainBelow = options.plainBelow ?? 1e5;
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return '0';
  const mag = Math.abs(value);
  if (mag >= plainBelow || mag < 1 / plainBelow) {
    const exp = leadingExponent(value);
    const mantissa = Number((value / 10 ** exp).toFixed(digits - 1));
    // Rounding can carry the mantissa to 10.
    if (Math.abs(mantissa) >= 10) return `${(mantissa / 10).toFixed(digits - 1)}e${exp + 1}`;
    return `${mantissa.toFixed(digits - 1)}e${exp}`;
  }
  const decimals = Math.max(0, digits - 1 - leadingExponent(value));
  return value.toFixed(Math.min(decimals, 20));
}

/** "4.021 ± 0.034"; falls back to the value alone when the uncertainty is missing or not positive. */
export function formatValueError(
  value: number,
  err: number | null | undefined,
  options: FormatOptions = {},
): string {
  const pm = options.plusMinus ?? ' ± ';
  const plainBelow = options.plainBelow ?? 1e5;
  if (!Number.isFinite(value)) return String(value);
  if (err === null || err === undefined || !Number.isFinite(err) || err <= 0)
    return formatNumber(value, options);
  const errExp = leadingExponent(err);
  const lastPlace = errExp - uncertaintyDigits(err) + 1; // decimal exponent of the last kept digit
  const big = Math.max(Math.abs(value), err);
  if (big >= plainBelow || big < 1 / plainBelow) {
    const exp = value !== 0 ? leadingExponent(value) : errExp;
    const decimals = Math.max(0, exp - lastPlace);
    const v = (value / 10 ** exp).toFixed(decimals);
    const e = (err / 10 ** exp).toFixed(decimals);
    return `(${v}${pm}${e})e${exp}`;
  }
  const decimals = Math.max(0, -lastPlace);
  const round = (x: number) =>
    lastPlace > 0 ? (Math.round(x / 10 ** lastPlace) * 10 ** lastPlace).toFixed(0) : x.toFixed(decimals);
  return `${round(value)}${pm}${round(err)}`;
}
