import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { JsonBytes, putBase64 } from '../../shared/jsonBytes.js';

const text = (write: (w: JsonBytes) => void): string => {
  const w = new JsonBytes(4);
  write(w);
  return new TextDecoder().decode(w.take());
};

// Any finite double, from subnormals to the largest, of either sign.
const finite = fc.double({ noNaN: true, noDefaultInfinity: true });
// Values of the size curves hold: counts, residuals, IRF tails.
const curveValue = fc
  .tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.integer({ min: -30, max: 30 }), fc.boolean())
  .map(([m, e, neg]) => (neg ? -1 : 1) * m * 10 ** e);

// Times and residuals, which are written to a number of decimals.
const fixedValue = fc.oneof(
  fc.double({ min: -1e6, max: 1e6, noNaN: true }),
  fc.integer({ min: -1e6, max: 1e6 }).map((k) => k / 1e4),
);

describe('JsonBytes', () => {
  // Reference: ECMAScript's Number.prototype.toPrecision (correctly rounded decimal digits) and
  // Number::toString (the layout, exponent from 1e21 and below 1e-6), as Node implements them.
  it('writes a value to n significant digits as toPrecision rounds it, in the text JavaScript prints for it', () => {
    fc.assert(
      fc.property(fc.oneof(finite, curveValue), fc.integer({ min: 1, max: 12 }), (v, digits) => {
        const expected = String(Number(v.toPrecision(digits)));
        expect(text((w) => w.significant(v, digits))).toBe(expected === '-0' ? '0' : expected);
      }),
      { numRuns: 20000 },
    );
  });

  it('writes a value to n decimals within one unit of the last decimal of the exact rounding', () => {
    fc.assert(
      fc.property(fixedValue, fc.integer({ min: 0, max: 9 }), (v, decimals) => {
        const got = JSON.parse(text((w) => w.fixed(v, decimals))) as number;
        const scale = 10 ** decimals;
        // Within half a unit of the last decimal (plus rounding of the double itself): correctly rounded.
        expect(Math.abs(got - v)).toBeLessThanOrEqual(0.5 / scale + Math.abs(v) * 4e-16);
        // And it is exactly a multiple of that unit: no digits beyond the asked decimals.
        expect(text((w) => w.fixed(v, decimals))).toMatch(
          decimals ? new RegExp(`^-?\\d+(\\.\\d{1,${decimals}})?$`) : /^-?\d+$/,
        );
      }),
      { numRuns: 20000 },
    );
  });

  // The array writers take shortcuts for the common cases; they must print what the single-value
  // writers above (checked against toPrecision and JSON.stringify) print, joined by commas. Runs of
  // neighbouring values share an exponent, as curves do, and cross powers of ten and carries.
  it('writes arrays as the single-value writers write each entry', () => {
    const entry = fc.oneof(
      { weight: 6, arbitrary: curveValue },
      { weight: 2, arbitrary: finite },
      {
        weight: 2,
        arbitrary: fc.constantFrom(
          null,
          0,
          -0,
          NaN,
          Infinity,
          9.9999999,
          0.99999996,
          1e-7,
          2 ** 31,
          -(2 ** 31),
        ),
      },
      { weight: 2, arbitrary: fc.integer({ min: -(2 ** 33), max: 2 ** 33 }) },
    );
    const run = fc
      .tuple(curveValue, fc.array(fc.double({ min: 0.9, max: 1.1, noNaN: true }), { maxLength: 8 }))
      .map(([v, steps]) => steps.map((f, k) => v * f ** k));
    const values = fc
      .array(
        fc.oneof(
          entry.map((v) => [v]),
          run,
        ),
        { maxLength: 12 },
      )
      .map((xs) => xs.flat());
    const one = (w: JsonBytes, v: number | null, write: (v: number) => void) =>
      v === null ? w.ascii('null') : write(v);
    fc.assert(
      fc.property(
        values,
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 0, max: 9 }),
        (vs, digits, decimals) => {
          const zeroBelow = 1e-3;
          const joined = (write: (w: JsonBytes, v: number | null) => void) =>
            text((w) => {
              w.byte(91);
              vs.forEach((v, i) => {
                if (i) w.byte(44);
                write(w, v);
              });
              w.byte(93);
            });
          expect(text((w) => w.significantArray(vs, digits))).toBe(
            joined((w, v) => one(w, v, (x) => w.significant(x, digits))),
          );
          expect(text((w) => w.significantArray(vs, digits, zeroBelow))).toBe(
            joined((w, v) =>
              one(w, v, (x) => (Math.abs(x) < zeroBelow ? w.byte(48) : w.significant(x, digits))),
            ),
          );
          expect(text((w) => w.fixedArray(vs, decimals))).toBe(
            joined((w, v) => one(w, v, (x) => w.fixed(x, decimals))),
          );
          expect(text((w) => w.exactArray(vs))).toBe(joined((w, v) => one(w, v, (x) => w.exact(x))));
        },
      ),
      { numRuns: 5000 },
    );
  });

  it('writes every value exactly as JSON.stringify does', () => {
    fc.assert(
      fc.property(fc.oneof(finite, fc.integer(), fc.integer({ min: -(2 ** 52), max: 2 ** 53 })), (v) => {
        expect(text((w) => w.exact(v))).toBe(JSON.stringify(v));
      }),
      { numRuns: 20000 },
    );
  });

  it('prints decimals without trailing zeros or a negative zero', () => {
    expect(text((w) => w.fixed(0.244, 4))).toBe('0.244');
    expect(text((w) => w.fixed(0.24400000000000002, 4))).toBe('0.244');
    expect(text((w) => w.fixed(2, 6))).toBe('2');
    expect(text((w) => w.fixed(-0.0000004, 6))).toBe('0');
    expect(text((w) => w.fixed(-1.5, 0))).toBe('-2');
    expect(text((w) => w.fixed(0.0000012, 6))).toBe('0.000001');
    expect(text((w) => w.significant(9.99999999, 7))).toBe('10');
    expect(text((w) => w.significant(1234567.89, 4))).toBe('1235000');
    expect(text((w) => w.significant(-1.23456789e-9, 3))).toBe('-1.23e-9');
    expect(text((w) => w.significant(5e-324, 7))).toBe('5e-324');
  });

  it('writes null for masked and non-finite entries of an array', () => {
    const values = [1.5, null, Number.NaN, Number.POSITIVE_INFINITY, -2];
    expect(text((w) => w.exactArray(values))).toBe('[1.5,null,null,null,-2]');
    expect(text((w) => w.fixedArray(values, 0))).toBe('[2,null,null,null,-2]');
    expect(text((w) => w.significantArray([0.0004, 12.345, null], 3, 1e-3))).toBe('[0,12.3,null]');
    expect(text((w) => w.fixedArray([0.1, 0.2, 0.3], 1, 2))).toBe('[0.1,0.2]');
  });

  it('encodes text as UTF-8 and grows past its first size', () => {
    const w = new JsonBytes(2);
    w.text(JSON.stringify({ sample: 'τ₁ "x" 😀' }));
    for (let i = 0; i < 1000; i++) w.ascii(',').exact(i);
    const out = new TextDecoder().decode(w.take());
    expect(out.startsWith('{"sample":"τ₁ \\"x\\" 😀"},0,1,2')).toBe(true);
    expect(out.endsWith(',998,999')).toBe(true);
  });

  it('takes a line with its newline and carries on writing after it', () => {
    const w = new JsonBytes();
    w.ascii('[1]');
    expect([...w.takeLine()]).toEqual([91, 49, 93, 10]);
    w.ascii(',2');
    expect(new TextDecoder().decode(w.take())).toBe('[1],2');
  });

  // Reference: the test vectors of RFC 4648, section 10.
  const RFC_4648_VECTORS: [string, string][] = [
    ['', ''],
    ['f', 'Zg=='],
    ['fo', 'Zm8='],
    ['foo', 'Zm9v'],
    ['foob', 'Zm9vYg=='],
    ['fooba', 'Zm9vYmE='],
    ['foobar', 'Zm9vYmFy'],
  ];

  it('writes base64 as RFC 4648 does, through its own encoder and through Node’s', () => {
    for (const [plain, encoded] of RFC_4648_VECTORS) {
      const bytes = new TextEncoder().encode(plain);
      const dst = new Uint8Array(encoded.length);
      expect(putBase64(bytes, dst, 0)).toBe(encoded.length);
      expect(new TextDecoder().decode(dst)).toBe(encoded);
      expect(text((w) => w.base64String(bytes))).toBe(`"${encoded}"`);
    }
  });

  it('writes any bytes as base64 that Node’s decoder reads back, from any offset into its buffer', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.nat(5), (bytes, skip) => {
        const view = bytes.subarray(Math.min(skip, bytes.length));
        const dst = new Uint8Array(4 * Math.ceil(view.length / 3));
        putBase64(view, dst, 0);
        const encoded = new TextDecoder().decode(dst);
        expect([...Buffer.from(encoded, 'base64')]).toEqual([...view]);
        expect(text((w) => w.base64String(view))).toBe(`"${encoded}"`);
      }),
      { numRuns: 500 },
    );
  });
});
