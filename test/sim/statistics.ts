/**
 * Test-side statistics for the simulator's checks, written independently of the fitter's code.
 */

/** Standard normal 99.9 % quantile, z(0.999) = 3.0902323 (VERIFIED with scipy, REFERENCE-VALUES §14). */
export const Z_0999 = 3.0902323;

/**
 * Upper quantile of χ² with ν degrees of freedom for a standard normal quantile z, by the
 * Wilson–Hilferty cube-root approximation (Wilson & Hilferty, Proc. Natl. Acad. Sci. 17, 684 (1931)):
 * χ²_q ≈ ν(1 − 2/(9ν) + z·sqrt(2/(9ν)))³. At the 99.9 % level it lies above the exact quantile by
 * 0.6 % at ν = 10, 0.04 % at ν = 100 and 0.0015 % at ν = 1000 (REFERENCE-VALUES §14, VERIFIED).
 */
export function chi2QuantileWilsonHilferty(nu: number, z: number): number {
  const a = 2 / (9 * nu);
  return nu * (1 - a + z * Math.sqrt(a)) ** 3;
}

/**
 * Pearson χ² of observed counts against expected counts over the cells whose expectation is at least
 * `minExpected`; returns χ² and the number of cells used (ν = cells when the expectation is fixed
 * in advance, as it is for a simulation whose truth we set).
 */
export function pearsonChi2(
  observed: ArrayLike<number>,
  expected: ArrayLike<number>,
  minExpected = 5,
): { chi2: number; cells: number } {
  let chi2 = 0;
  let cells = 0;
  for (let k = 0; k < expected.length; k++) {
    const e = expected[k];
    if (e < minExpected) continue;
    chi2 += (observed[k] - e) ** 2 / e;
    cells++;
  }
  return { chi2, cells };
}
