/**
 * Lagged products Σᵢ xᵢ·xᵢ₊ⱼ of a real sequence by the fast Fourier transform: the residual
 * autocorrelation of every fit needs a few hundred lags of a few thousand residuals, which costs
 * ~10⁶ multiply-adds summed directly and a few times less this way (Wiener–Khinchin: the transform
 * of the autocorrelation is the power spectrum).
 *
 * The sequence is zero-padded to a power of two L ≥ n, and the few products that the circular
 * correlation wraps around into the first maxLag lags are subtracted. Both real transforms of
 * length L run as complex transforms of length L/2 on the even and odd samples packed as real and
 * imaginary parts (the textbook packing of a real transform, as in Numerical Recipes' "FFT of real
 * functions"). Rounding error is of order ε·log₂L·Σxᵢ², far below what the autocorrelation is
 * read for.
 */

interface Tables {
  /** Complex length of the half-size transform. */
  m: number;
  /** cos and sin of 2πk/m, k < m/2 (twiddles of the half-size transform). */
  cos: Float64Array;
  sin: Float64Array;
  /** cos and sin of 2πk/L, k ≤ m (the packing's twiddles). */
  cosL: Float64Array;
  sinL: Float64Array;
  /** Bit-reversal permutation of 0 … m − 1. */
  reverse: Uint32Array;
  re: Float64Array;
  im: Float64Array;
}

let cached: Tables | null = null;

function tablesFor(m: number): Tables {
  if (cached && cached.m === m) return cached;
  const cos = new Float64Array(m / 2);
  const sin = new Float64Array(m / 2);
  for (let k = 0; k < m / 2; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / m);
    sin[k] = Math.sin((2 * Math.PI * k) / m);
  }
  const cosL = new Float64Array(m + 1);
  const sinL = new Float64Array(m + 1);
  for (let k = 0; k <= m; k++) {
    cosL[k] = Math.cos((Math.PI * k) / m);
    sinL[k] = Math.sin((Math.PI * k) / m);
  }
  const bits = Math.round(Math.log2(m));
  const reverse = new Uint32Array(m);
  for (let k = 0; k < m; k++) {
    let r = 0;
    for (let b = 0; b < bits; b++) r |= ((k >> b) & 1) << (bits - 1 - b);
    reverse[k] = r;
  }
  cached = { m, cos, sin, cosL, sinL, reverse, re: new Float64Array(m), im: new Float64Array(m) };
  return cached;
}

/** In-place forward complex DFT (e^{−2πikn/m}) of length m, a power of two, radix 2. */
function transform(t: Tables, re: Float64Array, im: Float64Array): void {
  const m = t.m;
  const rev = t.reverse;
  for (let k = 0; k < m; k++) {
    const r = rev[k];
    if (r > k) {
      const a = re[k];
      re[k] = re[r];
      re[r] = a;
      const b = im[k];
      im[k] = im[r];
      im[r] = b;
    }
  }
  const cos = t.cos;
  const sin = t.sin;
  for (let size = 2; size <= m; size *= 2) {
    const half = size >> 1;
    const step = (m / size) | 0;
    // One twiddle per pass over the blocks of this size.
    for (let j = 0; j < half; j++) {
      const wr = cos[j * step];
      const wi = -sin[j * step];
      for (let p = j; p < m; p += size) {
        const q = p + half;
        const xr = re[q] * wr - im[q] * wi;
        const xi = re[q] * wi + im[q] * wr;
        re[q] = re[p] - xr;
        im[q] = im[p] - xi;
        re[p] += xr;
        im[p] += xi;
      }
    }
  }
}

/**
 * |X[k]|² of the real sequence from the half-size transform: Z = Z[k], C = conj(Z[m−k]),
 * X[k] = E + e^{−iπk/m}·O with E = (Z + C)/2, O = (Z − C)/(2i) (for Z − C = a + ib, O = (b/2, −a/2)).
 */
function unpackedPower(zr: number, zi: number, cr: number, ci: number, cos: number, sin: number): number {
  const er = 0.5 * (zr + cr);
  const ei = 0.5 * (zi + ci);
  const or = 0.5 * (zi - ci);
  const oi = -0.5 * (zr - cr);
  const xr = er + cos * or + sin * oi;
  const xi = ei + cos * oi - sin * or;
  return xr * xr + xi * xi;
}

/**
 * out[j] = Σᵢ xᵢ·xᵢ₊ⱼ for j = 0 … maxLag (terms with i + j ≥ n left out), for 0 ≤ maxLag < n and
 * n ≥ 2. Allocates only its tables, kept for the next call of the same size.
 */
export function laggedProducts(x: ArrayLike<number>, maxLag: number, out: Float64Array): void {
  const n = x.length;
  // The circular correlation of length L ≥ n holds, at lag j, the wanted sum plus the wrapped
  // products xᵢ·xᵢ₊ⱼ₋L for i ≥ L − j. Padding to L ≥ n + maxLag avoids them; when few, they are
  // cheaper to subtract than a transform twice as long (~4000 residuals and 256 lags: 1830 products
  // against a length of 8192 instead of 4096).
  let L = 2;
  while (L < n) L *= 2;
  const over = maxLag - (L - n);
  if (over > 0 && (over * (over + 1)) / 2 > 4 * n) L *= 2;
  const m = L >> 1;
  const t = tablesFor(m);
  const re = t.re;
  const im = t.im;
  // Pack the even samples as real parts, the odd ones as imaginary parts; zeros beyond n.
  for (let k = 0; k < m; k++) {
    re[k] = 2 * k < n ? x[2 * k] : 0;
    im[k] = 2 * k + 1 < n ? x[2 * k + 1] : 0;
  }
  transform(t, re, im);
  // Power spectrum P[k] = |X[k]|², k = 0 … m, of the real sequence, unpacked from the half-size one:
  // X[k] = E[k] + e^{−iπk/m}·O[k] with E = (Z[k] + Z̄[m−k])/2 and O = (Z[k] − Z̄[m−k])/(2i).
  // Then the inverse, packed the same way: a real even P gives E′[k] = (P[k] + P[m−k])/2 and
  // O′[k] = (P[k] − P[m−k])/2·e^{+iπk/m}, whose half-size inverse holds the even lags in its real
  // part and the odd lags in its imaginary part. P is computed for k and m − k together, in place.
  const cosL = t.cosL;
  const sinL = t.sinL;
  // P[m]: X[m] = E[0] − O[0] = Re Z[0] − Im Z[0] (e^{−iπ} = −1, and Z[m] ≡ Z[0]).
  const pm = (re[0] - im[0]) * (re[0] - im[0]);
  const halfM = m >> 1;
  for (let k = 0; k <= halfM; k++) {
    const j = (m - k) & (m - 1);
    const zr = re[k];
    const zi = im[k];
    const wr = re[j];
    const wi = im[j];
    const a = unpackedPower(zr, zi, wr, -wi, cosL[k], sinL[k]);
    const b = k === 0 ? pm : unpackedPower(wr, wi, zr, -zi, cosL[m - k], sinL[m - k]);
    // Z′ = E′ + i·O′ at k and at m − k: E′ = e at both, O′[k] = d·e^{iπk/m} and
    // O′[m−k] = −d·e^{iπ(m−k)/m}. Index 0 pairs with P[m], index m/2 with itself (d = 0).
    const e = 0.5 * (a + b);
    const d = 0.5 * (a - b);
    if (k > 0 && k < halfM) {
      re[j] = e + d * sinL[j];
      im[j] = -d * cosL[j];
    }
    re[k] = e - d * sinL[k];
    im[k] = d * cosL[k];
  }
  // Inverse half-size transform by the forward one on the conjugate, scaled by 1/m.
  for (let k = 0; k < m; k++) im[k] = -im[k];
  transform(t, re, im);
  const scale = 1 / m;
  for (let j = 0; j <= maxLag; j++) {
    let wrapped = 0;
    for (let i = L - j; i < n; i++) wrapped += x[i] * x[i + j - L];
    out[j] = ((j & 1) === 0 ? re[j >> 1] : -im[j >> 1]) * scale - wrapped;
  }
}
