/**
 * Batch throughput: 1000 two-exponential decays of 4096 channels through the built CLI
 * (`node dist/cli/main.js batch`), with 1 and with 2 worker threads. Prints wall time, decays per
 * second, peak resident memory and the speed-up. Goal on a 2-core machine: ≤ 3 s wall and ≤ 300 MB
 * peak resident memory with 2 workers. Figures only; nothing here passes or fails on time.
 *
 * Stages: on this thread, the CPU time of each step a worker takes for a sample (read, parse, fit,
 * writing its results.json line and its report curves block; `JSON.stringify(fit)` for comparison).
 * They run somewhat slower here than in the CLI's workers, where no buffer is ever detached (see
 * `machineSpeedFresh`).
 * Then the whole CLI: the batch's thread only appends the workers' bytes to results.json (written
 * in manifest order as samples arrive) and report.html (curves blocks as they arrive), and at the end
 * writes the report's head and the tables.
 *
 * Data: the simulator's expected histogram for τ = 1.0 and 4.0 ns (intensity fractions 0.4/0.6),
 * Gaussian IRF (FWHM 0.15 ns), 0.0122 ns channels, ~10⁴ counts in the peak, background 5 per
 * channel; each decay is an independent Poisson draw per channel from it (the statistics of a
 * photon-counting histogram), which is far quicker than tracing 10⁹ photons one by one. One measured
 * IRF file is shared by every row, as in a real session.
 *
 * Peak memory: the CLI runs its workers as threads of one process, so the process's VmHWM (peak
 * resident set, from /proc/<pid>/status, polled every 100 ms until exit) covers them all. CPU time
 * is the whole process's, exact: this process's children's time (/proc/self/stat) before and after
 * the run. Each run prints the machine's load average at its start: on a shared machine a 1 → 2
 * worker speed-up in wall time needs two idle cores. The CPU time of each thread (from
 * /proc/<pid>/task, by the same poll, so up to the last 100 ms) is printed too: the batch's own
 * thread, then the others, largest first: the worker threads, and V8's helper threads, which compile
 * hot functions (each worker thread compiles its own) and collect garbage alongside.
 *
 * The poll is kept slow on purpose: reading those files every 10 ms slowed the run it watched by
 * ~0.1 s (the kernel takes locks of the process being read, which its page faults also need).
 *
 * Each configuration runs `BENCH_BATCH_RUNS` times (default 3), 1 and 2 workers in turn; the median
 * run is shown, with every run's wall time. `BENCH_BATCH_N` changes the number of decays (default
 * 1000).
 */
import { spawn } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { JsonBytes } from '../../shared/jsonBytes.js';
import { writePackedCurves } from '../../shared/reportHtml.js';
import { SCHEMA_VERSION, type SampleResult } from '../../shared/schema.js';
import { sha256Hex } from '../../src/batch/hash.js';
import { writeSampleResult } from '../../src/batch/resultJson.js';
import { fitDecay } from '../../src/fit/fitDecay.js';
import { decodeText } from '../../src/io/decodeText.js';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { createRng } from '../../src/sim/rng.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';
import { machineSpeedLine } from './machineSpeed.js';

const N = Number(process.env.BENCH_BATCH_N ?? 1000);
const RUNS = Math.max(1, Number(process.env.BENCH_BATCH_RUNS ?? 3));
const cores = availableParallelism();
const root = join(import.meta.dirname, '..', '..');
const cli = join(root, 'dist', 'cli', 'main.js');
if (!existsSync(cli)) {
  console.error('dist/cli/main.js is missing: run `npm run build` first (npm run bench does).');
  process.exit(1);
}

const dir = mkdtempSync(join(tmpdir(), 'lumirate-bench-batch-'));
try {
  const t0 = performance.now();
  const sim = simulateTcspc({
    components: [
      { tauNs: 1.0, fraction: 0.4 },
      { tauNs: 4.0, fraction: 0.6 },
    ],
    fractionKind: 'intensity',
    peakCounts: 1e4,
    channels: 4096,
    binWidthNs: 0.0122,
    irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
    backgroundPerChannel: 5,
    irfCounts: 1e5,
    seed: 20261202,
  });
  const timeNs = sim.decay.timeNs;
  writeFileSync(
    join(dir, 'irf.csv'),
    formatHistogramTable({ timeNs, series: [{ name: 'counts', counts: sim.irf.counts }] }, {}),
  );
  const data = join(dir, 'decays');
  mkdirSync(data);
  const rng = createRng(1);
  const rows = ['sample,decay,irf,components'];
  const counts = new Float64Array(timeNs.length);
  for (let i = 0; i < N; i++) {
    for (let k = 0; k < counts.length; k++) counts[k] = rng.poisson(sim.expected[k]);
    const name = `d${String(i).padStart(4, '0')}.csv`;
    writeFileSync(
      join(data, name),
      formatHistogramTable({ timeNs, series: [{ name: 'counts', counts }] }, {}),
    );
    rows.push(`s${i},decays/${name},irf.csv,2`);
  }
  writeFileSync(join(dir, 'manifest.csv'), rows.join('\n') + '\n');
  console.log(`generated ${N} decays of 4096 channels in ${((performance.now() - t0) / 1000).toFixed(1)} s`);

  // Where a sample's time goes, on this thread: CPU time of the process (not wall, so other load on
  // the machine does not inflate it; it does include the engine's own compiler and collector threads)
  // for each stage a worker runs. A fresh thread runs its first decays in the
  // interpreter while the compiler catches up, so the first 50 (what each worker pays once) are shown
  // apart from the median over decays 100-199 (the pace once compiled).
  {
    const cpuMs = () => {
      const u = process.cpuUsage();
      return (u.user + u.system) / 1000;
    };
    const irf = parseHistogramText(readFileSync(join(dir, 'irf.csv'), 'utf8'), { source: 'irf.csv' });
    const stageNames = [
      'read + decode + SHA-256',
      'parse',
      'fit (no curves)',
      'fit with curves',
      'JSON.stringify(fit)',
      'results.json line',
      'report curves block',
    ] as const;
    const stages = Object.fromEntries(stageNames.map((k) => [k, [] as number[]])) as Record<
      (typeof stageNames)[number],
      number[]
    >;
    const out = new JsonBytes(1 << 18);
    const m = Math.min(200, N);
    const sampleShell: SampleResult = {
      schemaVersion: SCHEMA_VERSION,
      sample: 's',
      status: 'ok',
      metadata: {},
      warnings: [],
      provenance: {
        lumirateVersion: '0',
        schemaVersion: SCHEMA_VERSION,
        inputs: [],
        settings: {},
        timeUtc: '',
        seed: null,
      },
    };
    for (let i = 0; i < m; i++) {
      let t = cpuMs();
      const bytes = readFileSync(join(data, `d${String(i).padStart(4, '0')}.csv`));
      const text = decodeText(bytes, 'decay');
      sha256Hex(bytes);
      stages['read + decode + SHA-256'].push(cpuMs() - t);
      t = cpuMs();
      const h = parseHistogramText(text, { source: 'decay' });
      stages.parse.push(cpuMs() - t);
      t = cpuMs();
      fitDecay(h, irf, { components: 2, curves: false });
      stages['fit (no curves)'].push(cpuMs() - t);
      t = cpuMs();
      const fit = fitDecay(h, irf, { components: 2 });
      stages['fit with curves'].push(cpuMs() - t);
      t = cpuMs();
      JSON.stringify(fit);
      stages['JSON.stringify(fit)'].push(cpuMs() - t);
      // What a worker does instead: the fit's numbers at full precision, its curves written compactly.
      t = cpuMs();
      writeSampleResult(out.reset(), { ...sampleShell, fit }).takeLine();
      stages['results.json line'].push(cpuMs() - t);
      t = cpuMs();
      writePackedCurves(out.reset(), fit.curves).takeLine();
      stages['report curves block'].push(cpuMs() - t);
    }
    const mean = (a: number[]) => a.reduce((x, y) => x + y, 0) / a.length;
    const medianOf = (a: number[]) => {
      const s = [...a].sort((x, y) => x - y);
      return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
    };
    console.log('CPU per decay by stage, one thread: mean of the first 50 | median of decays 100-199');
    for (const k of stageNames) {
      const first = stages[k].slice(0, 50);
      const warm = stages[k].slice(100, 200);
      console.log(
        `  ${k.padEnd(26)} ${mean(first).toFixed(2).padStart(6)} ms | ${warm.length ? medianOf(warm).toFixed(2).padStart(6) + ' ms' : '   (too few decays)'}`,
      );
    }
    console.log('  (a worker runs read, parse, fit with curves, results.json line and report block)');
  }

  interface Run {
    wallS: number;
    /** CPU time of the whole process, all threads, user + system. */
    cpuS: number;
    /** CPU time of each thread, s: the process's main thread first, then the others, largest first. */
    threadCpuS: number[];
    peakMb: number;
    code: number | null;
    ok: number;
    /** The machine's 1-minute load average when the run started: other work competes for the cores. */
    load: number;
  }
  // The fields of a /proc stat file after the command name (field 3 onward).
  const statFields = (stat: string) => stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  // utime and stime, fields 14 and 15 of /proc/<pid>/stat, counted in clock ticks (100 per second on Linux).
  const cpuTicks = (stat: string) => {
    const f = statFields(stat);
    return Number(f[11]) + Number(f[12]);
  };
  // cutime and cstime, fields 16 and 17 of /proc/self/stat: the time of this process's children that
  // have ended and been waited for (the run, once its exit is seen).
  const childrenTicks = () => {
    const f = statFields(readFileSync('/proc/self/stat', 'utf8'));
    return Number(f[13]) + Number(f[14]);
  };
  const runOnce = (jobs: number, extra: string[]): Promise<Run> =>
    new Promise((resolve) => {
      const out = join(dir, `out-${jobs}-${extra.join('')}`);
      const start = performance.now();
      const child = spawn(
        process.execPath,
        [cli, 'batch', join(dir, 'manifest.csv'), '--out', out, '--jobs', String(jobs), '--quiet', ...extra],
        {
          stdio: ['ignore', 'ignore', 'pipe'],
        },
      );
      let stderr = '';
      child.stderr.on('data', (d) => (stderr += d));
      let peakKb = 0;
      const ticksBefore = childrenTicks();
      const threadTicks = new Map<string, number>();
      const load = loadavg()[0];
      const poll = setInterval(() => {
        try {
          const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
          if (m) peakKb = Math.max(peakKb, Number(m[1]));
          for (const tid of readdirSync(`/proc/${child.pid}/task`)) {
            try {
              const t = cpuTicks(readFileSync(`/proc/${child.pid}/task/${tid}/stat`, 'utf8'));
              threadTicks.set(tid, Math.max(threadTicks.get(tid) ?? 0, t));
            } catch {
              // the thread has just ended
            }
          }
        } catch {
          // the process has just ended
        }
      }, 100);
      child.on('exit', (code) => {
        const wallS = (performance.now() - start) / 1000;
        clearInterval(poll);
        const m = /batch: (\d+) ok/.exec(stderr);
        if (code !== 0) process.stderr.write(stderr.split('\n').slice(0, 5).join('\n') + '\n');
        rmSync(out, { recursive: true, force: true });
        const main = threadTicks.get(String(child.pid)) ?? 0;
        threadTicks.delete(String(child.pid));
        const others = [...threadTicks.values()].filter((t) => t > 0).sort((a, b) => b - a);
        resolve({
          wallS,
          cpuS: (childrenTicks() - ticksBefore) / 100,
          threadCpuS: [main, ...others].map((t) => t / 100),
          peakMb: peakKb / 1024,
          code,
          ok: m ? Number(m[1]) : 0,
          load,
        });
      });
    });

  const variants: { label: string; extra: string[] }[] = [
    { label: 'all outputs (curves in results.json, report.html)', extra: [] },
    { label: 'tables only (--no-curves --no-report)', extra: ['--no-curves', '--no-report'] },
  ];
  for (const v of variants) {
    // The host may be slower now than a minute ago: the same loop the fit benchmark times, per block.
    console.log(`\n${v.label}\n  ${machineSpeedLine({ fresh: true })}`);
    // Several runs, 1 and 2 workers in turn: the host's speed drifts, and one run says little.
    const runs: Record<number, Run[]> = { 1: [], 2: [] };
    for (let k = 0; k < RUNS; k++) for (const jobs of [1, 2]) runs[jobs].push(await runOnce(jobs, v.extra));
    const results: Record<number, Run> = {};
    for (const jobs of [1, 2]) {
      const all = runs[jobs];
      const r = all.slice().sort((a, b) => a.wallS - b.wallS)[(all.length - 1) >> 1];
      results[jobs] = r;
      const walls = all.map((x) => x.wallS.toFixed(2)).join(', ');
      const peakMb = Math.max(...all.map((x) => x.peakMb));
      const ok = Math.min(...all.map((x) => x.ok));
      const codes = [...new Set(all.map((x) => x.code))].join('/');
      console.log(
        `  --jobs ${jobs}: ${r.wallS.toFixed(2)} s wall (median of ${all.length}: ${walls}), ${(N / r.wallS).toFixed(0)} decays/s, ${r.cpuS.toFixed(1)} s CPU, peak RSS ${peakMb.toFixed(0)} MB (most of any run), ${ok}/${N} ok, exit ${codes}, load ${r.load.toFixed(1)}`,
      );
    }
    for (const jobs of [1, 2]) {
      const [main, ...others] = results[jobs].threadCpuS;
      console.log(
        `  --jobs ${jobs} CPU by thread (median run): main ${main.toFixed(2)} s; others ${others.map((t) => t.toFixed(2)).join(', ')} s`,
      );
    }
    console.log(
      `  speed-up 1 → 2 workers: ${(results[1].wallS / results[2].wallS).toFixed(2)}×   (goal: ≤ 3 s and ≤ 300 MB with 2)`,
    );
    // With other work on the machine the wall-clock speed-up says little; the CPU time says whether
    // the second worker added work of its own (messaging, a second heap) or only ran alongside.
    console.log(
      `  CPU time 1 → 2 workers: ${results[1].cpuS.toFixed(1)} s → ${results[2].cpuS.toFixed(1)} s; a load above ${cores} leaves less than 2 cores to this run`,
    );
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
