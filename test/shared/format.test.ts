import { describe, expect, it } from 'vitest';
import { formatNumber, formatValueError, uncertaintyDigits } from '../../shared/format.js';

// Rounding convention: common practice, no single source (uncertainty to 1–2 significant digits,
// value to the same decimal place).
describe('formatValueError', () => {
  it('keeps two digits of an uncertainty that starts with 1 or 2', () => {
    expect(formatValueError(4.02137, 0.0241)).toBe('4.021 ± 0.024');
    expect(formatValueError(4.02137, 0.0141)).toBe('4.021 ± 0.014');
    expect(formatValueError(4.02137, 0.0251)).toBe('4.021 ± 0.025');
  });
  it('keeps one digit of an uncertainty that starts with 3 to 9', () => {
    expect(formatValueError(4.02137, 0.0341 * 2)).toBe('4.02 ± 0.07');
    expect(formatValueError(12.345, 0.4)).toBe('12.3 ± 0.4');
  });
  it('rounds to tens and hundreds when the uncertainty is large', () => {
    expect(formatValueError(1234.5, 56)).toBe('1230 ± 60');
    expect(formatValueError(1234.4, 16)).toBe('1234 ± 16');
  });
  it('shares one power of ten for rates in s⁻¹', () => {
    // Values of REFERENCE-VALUES §7: k_r = 1.2500e8 ± 5.1539e6 s⁻¹ (leading digit 5: one digit kept).
    expect(formatValueError(1.25e8, 5.1539e6)).toBe('(1.25 ± 0.05)e8');
    expect(formatValueError(2.0927e8, 1.9e6)).toBe('(2.093 ± 0.019)e8');
  });
  it('shows the value alone when the uncertainty is missing, zero or not finite', () => {
    expect(formatValueError(3.14159, NaN)).toBe('3.142');
    expect(formatValueError(3.14159, 0)).toBe('3.142');
    expect(formatValueError(3.14159, undefined)).toBe('3.142');
  });
  it('passes non-finite values through', () => {
    expect(formatValueError(NaN, 0.1)).toBe('NaN');
  });
});

describe('formatNumber', () => {
  it('uses four significant digits by default', () => {
    expect(formatNumber(0.0123456)).toBe('0.01235');
    expect(formatNumber(2.880881e-9)).toBe('2.881e-9');
    expect(formatNumber(123456, { digits: 3 })).toBe('1.23e5');
    expect(formatNumber(99999.9, { digits: 3 })).toBe('100000');
  });
});

describe('uncertaintyDigits', () => {
  it('treats 2.96 like 3.0 after rounding', () => {
    expect(uncertaintyDigits(2.96)).toBe(1);
    expect(uncertaintyDigits(0.00199)).toBe(2);
  });
});
