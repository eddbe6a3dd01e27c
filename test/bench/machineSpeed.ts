import { spawnSync } from 'node:child_process';

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

/**
 * `machineSpeedMs` in a fresh Node process, for figures of a run in a process of its own (the batch
 * CLI). In this one the loop can be slower than there: once any ArrayBuffer has been detached in a
 * process (the TypeScript loader these benchmarks run under transfers some), the engine compiles
 * typed-array code with extra checks, and the loop took 2.2 ms here against 1.5 ms in a fresh process.
 */
export function machineSpeedMsFresh(): number {
  const r = spawnSync(
    process.execPath,
    ['-e', `${machineSpeedMs.toString()}\nprocess.stdout.write(String(machineSpeedMs()));`],
    { encoding: 'utf8' },
  );
  const ms = Number(r.stdout);
  if (r.status !== 0 || !Number.isFinite(ms)) throw new Error(`the speed loop failed: ${r.stderr}`);
  return ms;
}

/**
 * The line the benchmarks print with it: measured in this process (whose code runs under the same
 * conditions as the loop), or with `fresh` in a process of its own (see `machineSpeedMsFresh`).
 */
export function machineSpeedLine(options: { fresh?: boolean } = {}): string {
  const ms = options.fresh ? machineSpeedMsFresh() : machineSpeedMs();
  const where = options.fresh ? 'best of 20, in a fresh process' : 'best of 20';
  return `machine speed now: 10⁶ multiply-adds in ${ms.toFixed(2)} ms (${where})`;
}
