/**
 * Machine speed at the time of a run, so that figures from a busy and an idle machine (or a shared
 * host that slows down now and then) can be compared: a fixed loop of 10⁶ multiply-adds over typed
 * arrays (the shape of the fitter's inner loops), best of 20, in ms.
 */
export function machineSpeedMs(): number {
  const n = 4096;
  const a = Float64Array.from({ length: 6 * n }, (_, i) => (i % 7) / 7);
  const w = new Float64Array(n).fill(1.01);
  const h = new Float64Array(36);
  let best = Infinity;
  for (let rep = 0; rep < 20; rep++) {
    const t0 = performance.now();
    // 12 × 4096 × 21 ≈ 1.03·10⁶ multiply-adds
    for (let k = 0; k < 12; k++) {
      for (let i = 0; i < n; i++) {
        const wi = w[i];
        for (let p = 0; p < 6; p++) {
          const wp = wi * a[p * n + i];
          for (let q = 0; q <= p; q++) h[p * 6 + q] += wp * a[q * n + i];
        }
      }
    }
    best = Math.min(best, performance.now() - t0);
  }
  return best;
}

/** The line the benchmarks print with it. */
export function machineSpeedLine(): string {
  return `machine speed now: 10⁶ multiply-adds in ${machineSpeedMs().toFixed(2)} ms (best of 20)`;
}
