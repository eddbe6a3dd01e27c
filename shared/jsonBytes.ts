/**
 * A growable buffer that JSON is written into as UTF-8 bytes, with number writers that round as they
 * print. Curves of thousands of channels are the bulk of a batch's output; printing their numbers here,
 * digit by digit into bytes, is several times quicker than `JSON.stringify` on arrays of doubles (which
 * finds the shortest round-trip digits of every value and builds a string that must then be encoded).
 *
 * Every number writer prints text that `JSON.parse` reads back as the rounded value, in the layout
 * JavaScript itself uses (`0.0122`, `1234567`, `1.5e-7`, never a trailing zero or `-0`); a value that
 * is not finite is written `null`, as `JSON.stringify` does.
 */

const POW10: number[] = Array.from({ length: 23 }, (_, k) => 10 ** k);
/** 10^k for k in ±MAX_EXPONENT, each the double nearest to it (as the literal `1e<k>` reads). */
const MAX_EXPONENT = 320;
const POW10_ALL = Float64Array.from({ length: 2 * MAX_EXPONENT + 1 }, (_, i) =>
  Number(`1e${i - MAX_EXPONENT}`),
);
function pow10(k: number): number {
  return POW10_ALL[k + MAX_EXPONENT];
}
const MINUS = 45;
const DOT = 46;
const ZERO = 48;
const encoder = new TextEncoder();
/** Most bytes one number of an array takes as written here (sign, 17 digits, point, exponent, comma). */
const NUMBER_ROOM = 32;
const NULL_BYTES = [110, 117, 108, 108];

/** The 64 characters of base64 (RFC 4648, section 4) as character codes. */
const BASE64_CODES = Uint8Array.from(
  'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/',
  (c) => c.charCodeAt(0),
);
const PAD = 61;

/**
 * Writes `src` as base64 (RFC 4648, with `=` padding) into `dst` at `at`, which has room for
 * 4·⌈n/3⌉ bytes; returns where it ends.
 */
export function putBase64(src: Uint8Array, dst: Uint8Array, at: number): number {
  const n = src.length;
  const T = BASE64_CODES;
  let i = 0;
  for (; i + 2 < n; i += 3) {
    const v = (src[i] << 16) | (src[i + 1] << 8) | src[i + 2];
    dst[at] = T[v >>> 18];
    dst[at + 1] = T[(v >>> 12) & 63];
    dst[at + 2] = T[(v >>> 6) & 63];
    dst[at + 3] = T[v & 63];
    at += 4;
  }
  if (i < n) {
    const two = i + 1 < n;
    const v = (src[i] << 16) | (two ? src[i + 1] << 8 : 0);
    dst[at] = T[v >>> 18];
    dst[at + 1] = T[(v >>> 12) & 63];
    dst[at + 2] = two ? T[(v >>> 6) & 63] : PAD;
    dst[at + 3] = PAD;
    at += 4;
  }
  return at;
}

/**
 * Node's own base64 encoder, where there is one: ten times quicker than `putBase64` on the tens of
 * kilobytes of a sample's curves. A browser has none, and uses `putBase64` (the same text).
 */
type NativeBuffer = {
  from(b: ArrayBufferLike, offset: number, length: number): { toString(encoding: 'base64'): string };
};
const nativeBuffer = (globalThis as { Buffer?: NativeBuffer }).Buffer;

/** "00" … "99" as character codes, for writing two digits at a time. */
const DIGIT_PAIRS = new Uint8Array(200);
for (let i = 0; i < 100; i++) {
  DIGIT_PAIRS[2 * i] = ZERO + Math.floor(i / 10);
  DIGIT_PAIRS[2 * i + 1] = ZERO + (i % 10);
}

/** Number of decimal digits of m (0 ≤ m < 2^31). */
function digitCount(m: number): number {
  if (m < 100000) return m < 100 ? (m < 10 ? 1 : 2) : m < 1000 ? 3 : m < 10000 ? 4 : 5;
  return m < 10000000 ? (m < 1000000 ? 6 : 7) : m < 100000000 ? 8 : m < 1000000000 ? 9 : 10;
}

/**
 * Writes the whole number m (0 ≤ m < 2^31) divided by 10^decimals into `buf` at `at`, without
 * trailing zeros after the point, and returns where it ends. The caller has made room.
 */
function putScaled(buf: Uint8Array, at: number, negative: boolean, m: number, decimals: number): number {
  // Small integers in 32-bit arithmetic: several times quicker than the same steps on doubles.
  m |= 0;
  while (decimals > 0) {
    const q = (m / 10) | 0;
    if (m - q * 10 !== 0) break;
    m = q;
    decimals--;
  }
  const n = digitCount(m);
  const end = at + (negative ? 1 : 0) + (n > decimals ? n - decimals : 1) + (decimals > 0 ? decimals + 1 : 0);
  let p = end;
  // Digits after the point (with the zeros that lead them when m has fewer digits), two at a time.
  let d = decimals;
  while (d >= 2) {
    const q = (m / 100) | 0;
    const r = (m - q * 100) << 1;
    buf[--p] = DIGIT_PAIRS[r + 1];
    buf[--p] = DIGIT_PAIRS[r];
    m = q;
    d -= 2;
  }
  if (d === 1) {
    const q = (m / 10) | 0;
    buf[--p] = ZERO + m - q * 10;
    m = q;
  }
  if (decimals > 0) buf[--p] = DOT;
  while (m >= 100) {
    const q = (m / 100) | 0;
    const r = (m - q * 100) << 1;
    buf[--p] = DIGIT_PAIRS[r + 1];
    buf[--p] = DIGIT_PAIRS[r];
    m = q;
  }
  if (m >= 10) {
    buf[--p] = DIGIT_PAIRS[(m << 1) + 1];
    buf[--p] = DIGIT_PAIRS[m << 1];
  } else buf[--p] = ZERO + m;
  if (negative) buf[--p] = MINUS;
  return end;
}

/** Is x (≥ 0) within a few units of its own rounding of a half-way point between whole numbers? */
function nearHalf(x: number): boolean {
  return Math.abs(x - Math.floor(x) - 0.5) <= x * 1e-15;
}

function putNull(buf: Uint8Array, at: number): number {
  buf[at] = NULL_BYTES[0];
  buf[at + 1] = NULL_BYTES[1];
  buf[at + 2] = NULL_BYTES[2];
  buf[at + 3] = NULL_BYTES[3];
  return at + 4;
}

export class JsonBytes {
  private buf: Uint8Array;
  /** Bytes written so far. */
  length = 0;
  /** Digits of the number being written, least significant first. */
  private readonly digits = new Uint8Array(24);
  /** Decimal exponent of the last value written to significant digits. */
  private lastExponent = 0;

  constructor(initialBytes = 1 << 16) {
    this.buf = new Uint8Array(initialBytes);
  }

  /** Forgets what was written, keeping the memory for the next text. */
  reset(): this {
    this.length = 0;
    return this;
  }

  private room(n: number): void {
    if (this.length + n <= this.buf.length) return;
    const bigger = new Uint8Array(Math.max(this.buf.length * 2, this.length + n));
    bigger.set(this.buf.subarray(0, this.length));
    this.buf = bigger;
  }

  /** Punctuation and keys: the text must be plain ASCII (it is copied char code by char code). */
  ascii(text: string): this {
    this.room(text.length);
    for (let i = 0; i < text.length; i++) this.buf[this.length++] = text.charCodeAt(i);
    return this;
  }

  /** Any text, encoded as UTF-8 (it is not quoted or escaped: pass JSON). */
  text(text: string): this {
    this.room(text.length * 3);
    this.length += encoder.encodeInto(text, this.buf.subarray(this.length)).written;
    return this;
  }

  /** The bytes as a JSON string of their base64 (RFC 4648, padded). */
  base64String(b: Uint8Array): this {
    const size = 4 * Math.ceil(b.length / 3);
    this.room(size + 2);
    this.buf[this.length++] = 34;
    if (nativeBuffer && size > 0) {
      const text = nativeBuffer.from(b.buffer, b.byteOffset, b.byteLength).toString('base64');
      this.length += encoder.encodeInto(text, this.buf.subarray(this.length)).written;
    } else this.length = putBase64(b, this.buf, this.length);
    this.buf[this.length++] = 34;
    return this;
  }

  /** Bytes already encoded (a piece written before). */
  bytes(b: Uint8Array): this {
    this.room(b.length);
    this.buf.set(b, this.length);
    this.length += b.length;
    return this;
  }

  byte(code: number): this {
    this.room(1);
    this.buf[this.length++] = code;
    return this;
  }

  /** What was written, as a view of the buffer (valid until the next write). */
  view(): Uint8Array {
    return this.buf.subarray(0, this.length);
  }

  /** A copy of what was written, in a buffer of its own (which can be transferred to another thread). */
  take(): Uint8Array {
    return this.buf.slice(0, this.length);
  }

  /** As `take()`, with a newline appended: one line of a JSON-lines file. */
  takeLine(): Uint8Array {
    this.byte(10);
    const line = this.take();
    this.length--;
    return line;
  }

  /** The full value, in JavaScript's shortest round-trip form (as `JSON.stringify` writes it). */
  exact(v: number): this {
    if (Number.isInteger(v) && Math.abs(v) < 2 ** 53) return this.integerDigits(v < 0, Math.abs(v), 0);
    return Number.isFinite(v) ? this.ascii(String(v)) : this.ascii('null');
  }

  /** `v` rounded to `decimals` places (0–15), half away from zero. */
  fixed(v: number, decimals: number): this {
    if (!Number.isFinite(v)) return this.ascii('null');
    const scale = pow10(decimals);
    const k = Math.round(Math.abs(v) * scale);
    if (k === 0) return this.byte(ZERO);
    // Beyond 2^53 the integer is no longer exact: let JavaScript print the rounded value.
    if (k >= 2 ** 53) return this.exact(Math.sign(v) * (k / scale));
    return this.integerDigits(v < 0, k, decimals);
  }

  /** `v` rounded to `digits` significant digits (1–15). */
  significant(v: number, digits: number): this {
    if (!Number.isFinite(v)) return this.ascii('null');
    if (v === 0) return this.byte(ZERO);
    const a = Math.abs(v);
    // The decimal exponent: neighbouring channels mostly share it, which spares a logarithm.
    let e = this.lastExponent;
    if (a < pow10(e) || a >= pow10(e + 1)) {
      e = Math.floor(Math.log10(a));
      // Near the ends of the double range 10^shift would overflow: such values go the slow way.
      if (e > 290 || e < -290) return this.ascii(String(Number(v.toPrecision(digits))));
      // log10 may land one off next to a power of ten.
      if (a < pow10(e)) e--;
      else if (a >= pow10(e + 1)) e++;
      this.lastExponent = e;
    }
    const shift = digits - 1 - e;
    const scaled = shift >= 0 ? a * pow10(shift) : a / pow10(-shift);
    // The scaling rounds: a value within a few units of that rounding of a half-way point may have
    // crossed it, and only the exact decimal expansion decides (rare: about 1 in 10^(16 − digits)).
    if (nearHalf(scaled)) return this.ascii(String(Number(v.toPrecision(digits))));
    let k = Math.round(scaled);
    if (k >= POW10[digits]) {
      // Rounding carried into a new digit (9.9999999 → 10.00000).
      k /= 10;
      e++;
    }
    // JavaScript's layout: plain from 1e-6 up to 1e21, with an exponent outside; trailing zeros after
    // the point are left out by integerDigits.
    if (e >= 0 && e < 21) {
      if (digits > e + 1) return this.integerDigits(v < 0, k, digits - 1 - e);
      this.integerDigits(v < 0, k, 0);
      for (let z = e + 1 - digits; z > 0; z--) this.byte(ZERO);
      return this;
    }
    if (e < 0 && e >= -6) return this.integerDigits(v < 0, k, digits - 1 - e);
    this.integerDigits(v < 0, k, digits - 1);
    this.byte(101).byte(e > 0 ? 43 : MINUS);
    return this.integerDigits(false, Math.abs(e), 0);
  }

  /**
   * Writes the integer `k` (exact, below 2^53) divided by 10^decimals, without trailing zeros after
   * the point. Values below 1e-6 come out plain (`0.0000001`), where JavaScript would write 1e-7;
   * `JSON.parse` reads both the same.
   */
  private integerDigits(negative: boolean, k: number, decimals: number): this {
    if (k >= 2 ** 31) return this.largeIntegerDigits(negative, k, decimals);
    this.room(NUMBER_ROOM);
    this.length = putScaled(this.buf, this.length, negative, k, decimals);
    return this;
  }

  /** `integerDigits` on doubles, for integers from 2^31 up to 2^53 (exact in that range). */
  private largeIntegerDigits(negative: boolean, k: number, decimals: number): this {
    while (decimals > 0 && k % 10 === 0) {
      k /= 10;
      decimals--;
    }
    let n = 0;
    do {
      this.digits[n++] = ZERO + (k % 10);
      k = Math.floor(k / 10);
    } while (k > 0);
    this.room(n + decimals + 3);
    const buf = this.buf;
    let at = this.length;
    if (negative) buf[at++] = MINUS;
    if (n <= decimals) {
      buf[at++] = ZERO;
      buf[at++] = DOT;
      for (let z = decimals - n; z > 0; z--) buf[at++] = ZERO;
      for (let i = n - 1; i >= 0; i--) buf[at++] = this.digits[i];
    } else {
      for (let i = n - 1; i >= 0; i--) {
        buf[at++] = this.digits[i];
        if (i === decimals && i > 0) buf[at++] = DOT;
      }
    }
    this.length = at;
    return this;
  }

  /**
   * Array writers reserve room for the whole array first and write the common cases (a whole number
   * below 2^31 once scaled) straight into the buffer; anything else goes through the single-value
   * writers, which fit in the room reserved for it.
   */

  /** Room for an array of `count` numbers, and its opening bracket; returns where the first goes. */
  private openArray(count: number): number {
    this.room(2 + count * NUMBER_ROOM);
    this.buf[this.length] = 91;
    return this.length + 1;
  }

  /** The closing bracket of an array whose last number ends at `at`. */
  private closeArray(at: number): this {
    this.buf[at] = 93;
    this.length = at + 1;
    return this;
  }

  /** A JSON array of the values at full precision; null and non-finite entries as `null`. */
  exactArray(values: ArrayLike<number | null>): this {
    const count = values.length;
    let at = this.openArray(count);
    for (let i = 0; i < count; i++) {
      const buf = this.buf;
      if (i) buf[at++] = 44;
      const v = values[i];
      if (v === null || !Number.isFinite(v)) at = putNull(buf, at);
      else if (Number.isInteger(v) && v < 2 ** 31 && v > -(2 ** 31))
        at = putScaled(buf, at, v < 0, Math.abs(v), 0);
      else {
        this.length = at;
        this.exact(v);
        at = this.length;
      }
    }
    return this.closeArray(at);
  }

  /** A JSON array of the first `count` values, each rounded to `decimals` places. */
  fixedArray(values: ArrayLike<number | null>, decimals: number, count = values.length): this {
    const scale = pow10(decimals);
    let at = this.openArray(count);
    for (let i = 0; i < count; i++) {
      const buf = this.buf;
      if (i) buf[at++] = 44;
      const v = values[i];
      if (v === null || !Number.isFinite(v)) {
        at = putNull(buf, at);
        continue;
      }
      const k = Math.round(Math.abs(v) * scale);
      if (k < 2 ** 31) at = putScaled(buf, at, v < 0 && k !== 0, k, decimals);
      else {
        this.length = at;
        this.fixed(v, decimals);
        at = this.length;
      }
    }
    return this.closeArray(at);
  }

  /**
   * A JSON array of the values, each rounded to `digits` significant digits; with `zeroBelow`, any
   * value smaller in magnitude is written 0.
   */
  significantArray(values: ArrayLike<number | null>, digits: number, zeroBelow = 0): this {
    const count = values.length;
    let at = this.openArray(count);
    const carried = POW10[digits];
    // The single-value writer's steps, kept in this loop for the common layouts (plain decimals,
    // below 2^31 once scaled); the rest goes through `significant` itself.
    let e = this.lastExponent;
    let lo = pow10(e);
    let hi = pow10(e + 1);
    for (let i = 0; i < count; i++) {
      const buf = this.buf;
      if (i) buf[at++] = 44;
      const v = values[i];
      if (v === null || !Number.isFinite(v)) {
        at = putNull(buf, at);
        continue;
      }
      const a = Math.abs(v);
      if (a < zeroBelow || v === 0) {
        buf[at++] = ZERO;
        continue;
      }
      if ((a < lo || a >= hi) && a > 1e-290 && a < 1e290) {
        e = Math.floor(Math.log10(a));
        if (a < pow10(e)) e--;
        else if (a >= pow10(e + 1)) e++;
        lo = pow10(e);
        hi = pow10(e + 1);
      }
      const shift = digits - 1 - e;
      const scaled = shift >= 0 ? a * pow10(shift) : a / pow10(-shift);
      if (a >= lo && a < hi && !nearHalf(scaled)) {
        let k = Math.round(scaled);
        let ek = e;
        if (k >= carried) {
          k /= 10;
          ek++;
        }
        if (ek >= -6 && ek < 21 && digits > ek + 1 && k < 2 ** 31) {
          at = putScaled(buf, at, v < 0, k, digits - 1 - ek);
          continue;
        }
      }
      this.length = at;
      this.lastExponent = e;
      this.significant(v, digits);
      at = this.length;
      e = this.lastExponent;
      lo = pow10(e);
      hi = pow10(e + 1);
    }
    this.lastExponent = e;
    return this.closeArray(at);
  }
}
