import { spawnSync } from 'node:child_process';

/** Times of the speed loop, ms: the best of 20 repetitions and their median. */
export interface MachineSpeed {
  bestMs: number;
  medianMs: number;
}

/**
 * Machine speed at the time of a run, so that figures from a busy and an idle machine (or a shared
 * host that slows down now and then) can be compared: a fixed loop of 10⁶ multiply-adds over typed
 * arrays (the shape of the fitter's inner loops), 20 times. The best time is what the processor can
 * do; the median, what this process got during the ~50 ms of the loop. On a shared virtual machine
 * the two part ways when the host is busy (1.6 ms best against 2.9 ms median has been seen). Neither
 * foretells the next few seconds: the host's pace changes within a run, so figures of runs made a
 * minute apart compare only roughly, and changes are best judged by runs interleaved with the old
 * build.
 */
export function machineSpeed(): MachineSpeed {
  const n = 4096;
  const a = Float64Array.from({ length: 6 * n }, (_, i) => (i % 7) / 7);
  const w = new Float64Array(n).fill(1.01);
  const h = new Float64Array(36);
  const times: number[] = [];
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
    times.push(performance.now() - t0);
  }
  times.sort((x, y) => x - y);
  return { bestMs: times[0], medianMs: (times[9] + times[10]) / 2 };
}

/**
 * `machineSpeed` in a fresh Node process, for figures of a run in a process of its own (the batch
 * CLI). In this one the loop can be slower than there: once any ArrayBuffer has been detached in a
 * process (the TypeScript loader these benchmarks run under transfers some), the engine compiles
 * typed-array code with extra checks, and the loop took 2.2 ms here against 1.5 ms in a fresh process.
 */
export function machineSpeedFresh(): MachineSpeed {
  const r = spawnSync(
    process.execPath,
    ['-e', `${machineSpeed.toString()}\nprocess.stdout.write(JSON.stringify(machineSpeed()));`],
    { encoding: 'utf8' },
  );
  let speed: MachineSpeed | undefined;
  try {
    speed = JSON.parse(r.stdout) as MachineSpeed;
  } catch {
    // reported below
  }
  if (r.status !== 0 || !speed || !Number.isFinite(speed.medianMs))
    throw new Error(`the speed loop failed: ${r.stderr}`);
  return speed;
}

/**
 * The line the benchmarks print with it: measured in this process (whose code runs under the same
 * conditions as the loop), or with `fresh` in a process of its own (see `machineSpeedFresh`).
 */
export function machineSpeedLine(options: { fresh?: boolean } = {}): string {
  const s = options.fresh ? machineSpeedFresh() : machineSpeed();
  const where = options.fresh ? ', in a fresh process' : '';
  return `machine speed now: 10⁶ multiply-adds in ${s.bestMs.toFixed(2)} ms best, ${s.medianMs.toFixed(2)} ms median of 20${where}`;
}
