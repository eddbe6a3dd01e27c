import { describe, expect, it } from 'vitest';
import { levenbergMarquardt, invertSymmetric, type LmProblem } from '../../src/fit/lm.js';
import { weightedGram } from '../../src/fit/weightedGram.js';
import { createRng } from '../../src/sim/rng.js';
import { levenbergMarquardt as packageLm } from 'ml-levenberg-marquardt';

// NIST StRD nonlinear regression, Lanczos1–3 (NIST ITL, Statistical Reference Datasets): data, starting
// points and certified values as listed in REFERENCE-VALUES §1 (VERIFIED there by a 60-digit refit).
const x = Array.from({ length: 24 }, (_, i) => i * 0.05);
const lanczosY = {
  Lanczos1: [
    2.5134, 2.044333373291, 1.668404436564, 1.366418021208, 1.123232487372, 0.9268897180037, 0.7679338563728,
    0.6388775523106, 0.5337835317402, 0.4479363617347, 0.377584788435, 0.3197393199326, 0.2720130773746,
    0.2324965529032, 0.1996589546065, 0.1722704126914, 0.1493405660168, 0.1300700206922, 0.1138119324644,
    0.1000415587559, 0.0883320908454, 0.0783354401935, 0.06976693743449, 0.06239312536719,
  ],
  Lanczos2: [
    2.5134, 2.04433, 1.6684, 1.36642, 1.12323, 0.92689, 0.767934, 0.638878, 0.533784, 0.447936, 0.377585,
    0.319739, 0.272013, 0.232497, 0.199659, 0.17227, 0.149341, 0.13007, 0.113812, 0.100042, 0.0883321,
    0.0783354, 0.0697669, 0.0623931,
  ],
  Lanczos3: [
    2.5134, 2.0443, 1.6684, 1.3664, 1.1232, 0.9269, 0.7679, 0.6389, 0.5338, 0.4479, 0.3776, 0.3197, 0.272,
    0.2325, 0.1997, 0.1723, 0.1493, 0.1301, 0.1138, 0.1, 0.0883, 0.0783, 0.0698, 0.0624,
  ],
};
// Certified values b1…b6, their standard deviations and the residual sum of squares (NIST StRD, REFERENCE-VALUES §1).
const certified = {
  Lanczos1: {
    b: [9.5100000027e-2, 1.0000000001, 8.6070000013e-1, 3.0000000002, 1.5575999998, 5.0000000001],
    sd: [
      5.3347304234e-11, 2.7473038179e-10, 1.3576062225e-10, 3.3308253069e-10, 1.8815731448e-10,
      1.1057500538e-10,
    ],
    rss: 1.4307867721e-25,
    bTol: 1e-6,
    sdTol: 1e-2,
  },
  Lanczos2: {
    b: [9.6251029939e-2, 1.0057332849, 8.6424689056e-1, 3.0078283915, 1.5529016879, 5.00287981],
    sd: [
      6.6770575477e-4, 3.3989646176e-3, 1.7185846685e-3, 4.1707005856e-3, 2.3744381417e-3, 1.3958787284e-3,
    ],
    rss: 2.2299428125e-11,
    bTol: 1e-6,
    sdTol: 1e-4,
  },
  Lanczos3: {
    b: [8.6816414977e-2, 9.5498101505e-1, 8.4400777463e-1, 2.9515951832, 1.5825685901, 4.9863565084],
    sd: [
      1.7197908859e-2, 9.7041624475e-2, 4.1488663282e-2, 1.0766312506e-1, 5.8371576281e-2, 3.4436403035e-2,
    ],
    rss: 1.6117193594e-8,
    bTol: 1e-4,
    sdTol: 1e-4,
  },
};
// NIST StRD Lanczos starting points 1 and 2.
const starts = [
  [1.2, 0.3, 5.6, 5.5, 6.5, 7.6],
  [0.5, 0.7, 3.6, 4.2, 4, 6.3],
];

function lanczosProblem(y: number[]): LmProblem {
  return {
    nParams: 6,
    nPoints: 24,
    data: Float64Array.from(y),
    loss: 'leastSquares',
    evaluate(p, model, jac) {
      for (let i = 0; i < 24; i++) {
        let m = 0;
        for (let k = 0; k < 3; k++) {
          const e = Math.exp(-p[2 * k + 1] * x[i]);
          m += p[2 * k] * e;
          if (jac) {
            jac[2 * k * 24 + i] = e;
            jac[(2 * k + 1) * 24 + i] = -p[2 * k] * x[i] * e;
          }
        }
        model[i] = m;
      }
      return true;
    },
  };
}

/** Terms sorted by rate, as the certified values list them. */
function sortedByRate(p: ArrayLike<number>, sd: ArrayLike<number>): { b: number[]; sd: number[] } {
  const order = [0, 1, 2].sort((a, b) => p[2 * a + 1] - p[2 * b + 1]);
  return {
    b: order.flatMap((k) => [p[2 * k], p[2 * k + 1]]),
    sd: order.flatMap((k) => [sd[2 * k], sd[2 * k + 1]]),
  };
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('levenbergMarquardt on the NIST StRD Lanczos problems', () => {
  for (const name of ['Lanczos1', 'Lanczos2', 'Lanczos3'] as const) {
    starts.forEach((start, s) => {
      it(`reproduces the certified ${name} parameters, standard deviations and RSS from start ${s + 1}`, () => {
        const c = certified[name];
        const r = levenbergMarquardt(lanczosProblem(lanczosY[name]), start, {
          maxIterations: 1000,
          ftol: 1e-15,
          xtol: 1e-13,
        });
        expect(r.stop).toBe('converged');
        // Certified SD = sqrt(diag(s²(JᵀJ)⁻¹)), s² = RSS/dof, dof = 18; our Hessian is 2JᵀJ.
        const inv = invertSymmetric(r.hessian, 6)!;
        const s2 = r.objective / 18;
        const sd = Array.from({ length: 6 }, (_, k) => Math.sqrt(2 * inv[k * 6 + k] * s2));
        const got = sortedByRate(r.params, sd);
        for (let k = 0; k < 6; k++) {
          expect(rel(got.b[k], c.b[k])).toBeLessThan(c.bTol);
          expect(rel(got.sd[k], c.sd[k])).toBeLessThan(c.sdTol);
        }
        // Lanczos1's RSS is at round-off level: REFERENCE-VALUES §1 asks only RSS < 1e-23 there.
        if (name === 'Lanczos1') expect(r.objective).toBeLessThan(1e-23);
        else expect(rel(r.objective, c.rss)).toBeLessThan(1e-6);
      });
    });
  }

  it('ml-levenberg-marquardt with its finite-difference Jacobian gets Lanczos3 to only a few digits (outside reference point)', () => {
    // The package's own options, tightened; its finite-difference Jacobian limits the digits it reaches
    // (REFERENCE-VALUES §1: a finite-difference Jacobian took Lanczos3 to LRE ≈ 4.6).
    const c = certified.Lanczos3;
    const fit = packageLm(
      { x, y: lanczosY.Lanczos3 },
      ([b1, b2, b3, b4, b5, b6]: number[]) =>
        (t: number) =>
          b1 * Math.exp(-b2 * t) + b3 * Math.exp(-b4 * t) + b5 * Math.exp(-b6 * t),
      { initialValues: starts[1], maxIterations: 2000, errorTolerance: 1e-12, damping: 1e-3 },
    );
    const got = sortedByRate(fit.parameterValues, [0, 0, 0, 0, 0, 0]);
    const worstLre = Math.min(...got.b.map((b, k) => -Math.log10(rel(b, c.b[k]))));
    // Measured: ≈ 1.8 digits after 2000 iterations; short of the NIST-style pass (LRE ≥ 4, REFERENCE-VALUES
    // §1) that our analytic-Jacobian minimiser clears by a wide margin in the tests above.
    expect(worstLre).toBeLessThan(4);
  });
});

describe('weightedGram', () => {
  // Reference: the definition gram[a][b] = Σ wᵢ·cₐᵢ·c_bᵢ, proj[a] = Σ vᵢ·cₐᵢ, summed by a plain loop.
  const direct = (cols: Float64Array, C: number, N: number, w: Float64Array, v: Float64Array) => {
    const gram = new Float64Array(C * C);
    const proj = new Float64Array(C);
    for (let a = 0; a < C; a++) {
      for (let i = 0; i < N; i++) proj[a] += v[i] * cols[a * N + i];
      for (let b = 0; b < C; b++)
        for (let i = 0; i < N; i++) gram[a * C + b] += w[i] * cols[a * N + i] * cols[b * N + i];
    }
    return { gram, proj };
  };
  it.each([
    [1, 7, -1],
    [1, 5, 0],
    [2, 8, 1],
    [3, 1, -1],
    [4, 40, 3],
    [5, 9, -1],
    [6, 101, 4],
    [6, 100, 0],
    [7, 33, 6],
    [8, 41, 7],
    [10, 29, 2],
    [12, 30, -1],
    [14, 50, 13],
  ])('C = %i columns of N = %i points, constant column %i', (C, N, ones) => {
    const rng = createRng(C * 1000 + N);
    const cols = Float64Array.from({ length: C * N }, () => rng.uniform() - 0.3);
    // The constant column's stored values are not read when it is declared: fill it with 1 only
    // for the reference, and with garbage for the function under test.
    const forRef = Float64Array.from(cols);
    if (ones >= 0) {
      forRef.fill(1, ones * N, (ones + 1) * N);
      cols.fill(NaN, ones * N, (ones + 1) * N);
    }
    const w = Float64Array.from({ length: N }, () => rng.uniform() + 0.5);
    const v = Float64Array.from({ length: N }, () => rng.uniform() - 0.5);
    const gram = new Float64Array(C * C).fill(NaN);
    const proj = new Float64Array(C).fill(NaN);
    weightedGram(cols, C, N, w, v, gram, proj, ones);
    const ref = direct(forRef, C, N, w, v);
    for (let k = 0; k < C * C; k++) expect(gram[k]).toBeCloseTo(ref.gram[k], 10);
    for (let a = 0; a < C; a++) expect(proj[a]).toBeCloseTo(ref.proj[a], 10);
  });
});
