/**
 * Weighted Gram matrix and projection of C columns packed row-wise in `cols` (cols[a·N + i]):
 * gram[a·C + b] = Σᵢ wᵢ·cₐᵢ·c_bᵢ and proj[a] = Σᵢ vᵢ·cₐᵢ. Overwrites gram (C×C) and proj (C).
 * The normal equations of every decay fit and of the start values are built here, a few times per
 * fit over every channel, so it is the fitter's hottest loop.
 *
 * Few passes over the points, each doing many sums: a pass loads a handful of columns once and
 * keeps a dozen sums going. The first three columns go in one pass (their 6 products, 3
 * projections); every later pair of columns goes in one pass against the first three and itself (9
 * products, 2 projections), and against any further earlier columns three at a time. The six
 * columns of a 2-exponential fit with a background take two passes; pairs of columns, four sums
 * per pass, took twelve and twice as long (measured 75 → 42 µs for 6 columns of 3978 points, and
 * 30–50 % less for 4 to 14 columns).
 *
 * A missing column of a block (fewer columns than the block holds) reads the values of a real column
 * and its sums are dropped: cheaper than a kernel for each block width.
 *
 * `ones`: index of a column known to be 1 at every point (a constant offset such as a background), or
 * −1. Its entries are plain sums, Σwᵢcₐᵢ taken alongside the products, so its dot products are
 * skipped; its stored values are not read.
 */
export function weightedGram(
  cols: Float64Array,
  C: number,
  N: number,
  w: Float64Array,
  v: Float64Array,
  gram: Float64Array,
  proj: Float64Array,
  ones = -1,
): void {
  if (gramColumns.length < C) gramColumns = new Int32Array(C);
  const idx = gramColumns;
  let K = 0;
  for (let a = 0; a < C; a++) if (a !== ones) idx[K++] = a;
  // A block position past the last column reads any real column (all are N long).
  const spare = K > 0 ? idx[0] : Math.max(ones, 0);
  const s: Sink = { gram, proj, C, ones, N, spare };
  const col = (k: number, end: number) => (k < end ? idx[k] : -1);
  firstThree(s, cols, w, v, col(0, K), col(1, K), col(2, K));
  for (let x = 3; x < K; x += 2) {
    const a0 = col(x, K);
    const a1 = col(x + 1, K);
    pairWithFirstThree(s, cols, w, v, a0, a1, col(0, K), col(1, K), col(2, K));
    for (let y = 3; y < x; y += 3)
      pairAgainstThree(s, cols, w, a0, a1, col(y, x), col(y + 1, x), col(y + 2, x));
  }
}

/** Where the kernels store their sums. */
interface Sink {
  gram: Float64Array;
  proj: Float64Array;
  C: number;
  ones: number;
  /** Points per column. */
  N: number;
  /** The column a missing one (−1) reads. */
  spare: number;
}

/** Where column a starts in `cols`. */
function offset(s: Sink, a: number): number {
  return (a >= 0 ? a : s.spare) * s.N;
}

let gramColumns = new Int32Array(16);

/** Entries (a, b) and (b, a); nothing when either column is a block's missing one (−1). */
function putPair(s: Sink, a: number, b: number, value: number): void {
  if (a >= 0 && b >= 0) s.gram[a * s.C + b] = s.gram[b * s.C + a] = value;
}

/** Column a's projection and its entry with the ones column (when there is one). */
function putColumn(s: Sink, a: number, projection: number, onesEntry: number): void {
  if (a < 0) return;
  s.proj[a] = projection;
  if (s.ones >= 0) putPair(s, a, s.ones, onesEntry);
}

/** Columns a0–a2: their products, projections, ones entries, and Σw, Σv. */
function firstThree(
  s: Sink,
  cols: Float64Array,
  w: Float64Array,
  v: Float64Array,
  a0: number,
  a1: number,
  a2: number,
): void {
  const N = s.N;
  const o0 = offset(s, a0);
  const o1 = offset(s, a1);
  const o2 = offset(s, a2);
  let s00 = 0;
  let s10 = 0;
  let s11 = 0;
  let s20 = 0;
  let s21 = 0;
  let s22 = 0;
  let p0 = 0;
  let p1 = 0;
  let p2 = 0;
  let t0 = 0;
  let t1 = 0;
  let t2 = 0;
  let sw = 0;
  let sv = 0;
  for (let i = 0; i < N; i++) {
    const wi = w[i];
    const vi = v[i];
    const x0 = cols[o0 + i];
    const x1 = cols[o1 + i];
    const x2 = cols[o2 + i];
    const y0 = wi * x0;
    const y1 = wi * x1;
    const y2 = wi * x2;
    s00 += y0 * x0;
    s10 += y1 * x0;
    s11 += y1 * x1;
    s20 += y2 * x0;
    s21 += y2 * x1;
    s22 += y2 * x2;
    p0 += vi * x0;
    p1 += vi * x1;
    p2 += vi * x2;
    t0 += y0;
    t1 += y1;
    t2 += y2;
    sw += wi;
    sv += vi;
  }
  putPair(s, a0, a0, s00);
  putPair(s, a1, a0, s10);
  putPair(s, a1, a1, s11);
  putPair(s, a2, a0, s20);
  putPair(s, a2, a1, s21);
  putPair(s, a2, a2, s22);
  putColumn(s, a0, p0, t0);
  putColumn(s, a1, p1, t1);
  putColumn(s, a2, p2, t2);
  if (s.ones >= 0) {
    s.gram[s.ones * s.C + s.ones] = sw;
    s.proj[s.ones] = sv;
  }
}

/** Columns a0, a1 against b0–b2 and each other: products, projections, ones entries. */
function pairWithFirstThree(
  s: Sink,
  cols: Float64Array,
  w: Float64Array,
  v: Float64Array,
  a0: number,
  a1: number,
  b0: number,
  b1: number,
  b2: number,
): void {
  const N = s.N;
  const oa0 = offset(s, a0);
  const oa1 = offset(s, a1);
  const o0 = offset(s, b0);
  const o1 = offset(s, b1);
  const o2 = offset(s, b2);
  let r00 = 0;
  let r01 = 0;
  let r02 = 0;
  let r10 = 0;
  let r11 = 0;
  let r12 = 0;
  let q00 = 0;
  let q10 = 0;
  let q11 = 0;
  let p0 = 0;
  let p1 = 0;
  let t0 = 0;
  let t1 = 0;
  for (let i = 0; i < N; i++) {
    const wi = w[i];
    const vi = v[i];
    const z0 = cols[oa0 + i];
    const z1 = cols[oa1 + i];
    const y0 = wi * z0;
    const y1 = wi * z1;
    const x0 = cols[o0 + i];
    const x1 = cols[o1 + i];
    const x2 = cols[o2 + i];
    r00 += y0 * x0;
    r01 += y0 * x1;
    r02 += y0 * x2;
    r10 += y1 * x0;
    r11 += y1 * x1;
    r12 += y1 * x2;
    q00 += y0 * z0;
    q10 += y1 * z0;
    q11 += y1 * z1;
    p0 += vi * z0;
    p1 += vi * z1;
    t0 += y0;
    t1 += y1;
  }
  putSix(s, a0, a1, b0, b1, b2, r00, r01, r02, r10, r11, r12);
  putPair(s, a0, a0, q00);
  putPair(s, a1, a0, q10);
  putPair(s, a1, a1, q11);
  putColumn(s, a0, p0, t0);
  putColumn(s, a1, p1, t1);
}

/**
 * Columns a0, a1 against b0–b2: products only. Not `pairWithFirstThree` with its other sums
 * dropped: those would make each of these passes half as long again, and the start values' 13
 * columns take eight of them (measured 49 → 71 µs for 569 points).
 */
function pairAgainstThree(
  s: Sink,
  cols: Float64Array,
  w: Float64Array,
  a0: number,
  a1: number,
  b0: number,
  b1: number,
  b2: number,
): void {
  const N = s.N;
  const oa0 = offset(s, a0);
  const oa1 = offset(s, a1);
  const o0 = offset(s, b0);
  const o1 = offset(s, b1);
  const o2 = offset(s, b2);
  let r00 = 0;
  let r01 = 0;
  let r02 = 0;
  let r10 = 0;
  let r11 = 0;
  let r12 = 0;
  for (let i = 0; i < N; i++) {
    const wi = w[i];
    const y0 = wi * cols[oa0 + i];
    const y1 = wi * cols[oa1 + i];
    const x0 = cols[o0 + i];
    const x1 = cols[o1 + i];
    const x2 = cols[o2 + i];
    r00 += y0 * x0;
    r01 += y0 * x1;
    r02 += y0 * x2;
    r10 += y1 * x0;
    r11 += y1 * x1;
    r12 += y1 * x2;
  }
  putSix(s, a0, a1, b0, b1, b2, r00, r01, r02, r10, r11, r12);
}

/** The six products of columns a0, a1 with b0–b2. */
function putSix(
  s: Sink,
  a0: number,
  a1: number,
  b0: number,
  b1: number,
  b2: number,
  r00: number,
  r01: number,
  r02: number,
  r10: number,
  r11: number,
  r12: number,
): void {
  putPair(s, a0, b0, r00);
  putPair(s, a0, b1, r01);
  putPair(s, a0, b2, r02);
  putPair(s, a1, b0, r10);
  putPair(s, a1, b1, r11);
  putPair(s, a1, b2, r12);
}
