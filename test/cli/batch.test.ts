/**
 * `lumirate batch`, `series` and `merge` end to end, on simulated decays whose truth the test sets:
 * a temperature series (Arrhenius k_nr) and a quencher titration (Stern–Volmer), plus three bad rows.
 */
import { execFileSync, spawn } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  readdirSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SampleResult, SeriesResult } from '../../shared/schema.js';
import { runSeries } from '../../src/batch/series.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';
import { runCli, runCliSync } from './runCli.js';

const root = join(import.meta.dirname, '..', '..');
const dir = mkdtempSync(join(tmpdir(), 'lumirate-batch-'));
afterAll(() => (process.env.KEEP_BATCH_TEST ? undefined : rmSync(dir, { recursive: true, force: true })));
const at = (...p: string[]) => join(dir, ...p);

const lumirate = (...args: string[]) => runCliSync(args);

// Truths set by this test (the law and its worked values: REFERENCE-VALUES §12).
const R = 8.31446261815; // J mol⁻¹ K⁻¹, CODATA 2018 (REFERENCE-VALUES §3)
const KR = 1e8;
const K0 = 1e7;
const A = 1e13;
const EA_KJ = 30;
const knr = (t: number) => K0 + A * Math.exp((-EA_KJ * 1e3) / (R * t));
const TEMPS = [263.15, 283.15, 303.15, 323.15, 343.15, 363.15];
const TAU0 = 4;
const KQ = 1e10;
const QS = [0, 0.01, 0.02, 0.03, 0.04, 0.05];

interface Truth {
  sample: string;
  tauNs: number;
}
const truths: Truth[] = [];

function simulate(name: string, tauNs: number, seed: number): void {
  const sim = simulateTcspc({
    components: [{ tauNs, fraction: 1 }],
    totalCounts: 2e5,
    channels: 1024,
    binWidthNs: 0.05,
    irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 1.5 },
    backgroundPerChannel: 2,
    irfCounts: 1e5,
    seed,
  });
  writeFileSync(
    at('data', `${name}.csv`),
    formatHistogramTable(
      { timeNs: sim.decay.timeNs, series: [{ name: 'counts', counts: sim.decay.counts }] },
      {},
    ),
  );
  if (!existsSync(at('data', 'irf.csv'))) {
    writeFileSync(
      at('data', 'irf.csv'),
      formatHistogramTable(
        { timeNs: sim.irf.timeNs, series: [{ name: 'counts', counts: sim.irf.counts }] },
        {},
      ),
    );
  }
  truths.push({ sample: name, tauNs });
}

const normalise = (rows: SampleResult[]) =>
  rows.map((r) => ({ ...r, provenance: { ...r.provenance, timeUtc: 'T' } }));
const readResults = (d: string) =>
  JSON.parse(readFileSync(join(d, 'results.json'), 'utf8')) as SampleResult[];

beforeAll(() => {
  mkdirSync(at('data'));
  const rows = ['sample,decay,irf,components,qy,qy_err,temperature_k,quencher_m'];
  TEMPS.forEach((t, k) => {
    const tau = 1e9 / (KR + knr(t));
    simulate(`T${t}`, tau, 100 + k);
    rows.push(`T${t},data/T${t}.csv,data/irf.csv,1,${(KR * tau * 1e-9).toFixed(5)},0.005,${t},`);
  });
  QS.forEach((q, k) => {
    const tau = TAU0 / (1 + KQ * TAU0 * 1e-9 * q);
    simulate(`Q${q}`, tau, 200 + k);
    rows.push(`Q${q},data/Q${q}.csv,data/irf.csv,1,,,,${q}`);
  });
  writeFileSync(at('data', 'garbage.csv'), 'this is not a histogram\nat all, really\n');
  rows.push('missing,data/nowhere.csv,data/irf.csv,1,,,,');
  rows.push('bad-irf,data/T263.15.csv,data/garbage.csv,1,,,,');
  rows.push('garbage-decay,data/garbage.csv,data/irf.csv,1,,,,');
  writeFileSync(at('manifest.csv'), rows.join('\n') + '\n');
  writeFileSync(
    at('settings.json'),
    '// series for the report\n{ "series": [ { "model": "arrhenius", "x": "temperature_k" }, { "model": "stern-volmer", "x": "quencher_m" } ] }\n',
  );
});

/**
 * Starts a one-worker batch into `out` and sends `signal` once three samples are in results.json's
 * temporary copy (where a running batch puts each result as it arrives).
 */
async function startAndSignal(out: string, signal: NodeJS.Signals) {
  const args = ['--import', 'tsx', join(root, 'cli', 'main.ts'), 'batch', at('manifest.csv'), '--out', out];
  const child = spawn(
    process.execPath,
    [...args, '--settings', at('settings.json'), '--jobs', '1', '--no-report'],
    {
      cwd: root,
      stdio: ['ignore', 'ignore', 'pipe'],
    },
  );
  let stderr = '';
  child.stderr!.on('data', (d) => (stderr += d));
  const exited = new Promise<{ code: number | null; stderr: string }>((resolve) =>
    child.on('exit', (code) => resolve({ code, stderr })),
  );
  const finished = () => {
    const copy = existsSync(out)
      ? readdirSync(out).find((n) => /^results\.json\.tmp-\d+$/.test(n))
      : undefined;
    // The opening bracket's line, then one line per sample.
    return copy ? readFileSync(join(out, copy), 'utf8').split('\n').length - 2 : 0;
  };
  await new Promise<void>((resolve, reject) => {
    const started = Date.now();
    const poll = setInterval(() => {
      const lines = finished();
      if (lines >= 3) {
        clearInterval(poll);
        child.kill(signal);
        resolve();
      } else if (Date.now() - started > 60_000) {
        clearInterval(poll);
        reject(new Error('the batch never got going'));
      }
    }, 5);
  });
  return { exited };
}

describe('lumirate batch', () => {
  let clean: SampleResult[];

  it('fits every good sample, reports each bad row with its error and exits 4', () => {
    const r = lumirate(
      'batch',
      at('manifest.csv'),
      '--out',
      at('clean'),
      '--settings',
      at('settings.json'),
      '--jobs',
      '2',
      '--no-report',
    );
    expect(r.code).toBe(4);
    expect(r.stderr).toContain('batch: 12 ok, 3 failed (of 15)');
    expect(r.stderr).toMatch(
      /failed missing: .*manifest\.csv line 14, column 9: decay file 'data\/nowhere\.csv' not found/,
    );
    expect(r.stderr).toMatch(/failed bad-irf: data\/garbage\.csv/);
    expect(r.stderr).toMatch(/failed garbage-decay: data\/garbage\.csv/);
    const log = readFileSync(at('clean', 'errors.log'), 'utf8').trim().split('\n');
    expect(log.map((l) => l.split('\t')[0])).toEqual(['missing', 'bad-irf', 'garbage-decay']);
    clean = readResults(at('clean'));
    expect(clean.map((s) => s.sample)).toEqual([
      ...truths.map((t) => t.sample),
      'missing',
      'bad-irf',
      'garbage-decay',
    ]);
    const csv = readFileSync(at('clean', 'results.csv'), 'utf8').trim().split('\n');
    expect(csv).toHaveLength(16);
    expect(readFileSync(at('clean', 'summary.md'), 'utf8')).toContain('12 of 15 samples fitted.');
    expect(readdirSync(at('clean')).sort()).toEqual([
      'errors.log',
      'results.csv',
      'results.json',
      'series.json',
      'summary.md',
    ]);
  });

  it("recovers every sample's simulated lifetime within 3σ", () => {
    for (const t of truths) {
      const s = clean.find((c) => c.sample === t.sample)!;
      expect(s.status).toBe('ok');
      const c = s.fit!.components[0];
      expect(Math.abs(c.tauNs - t.tauNs)).toBeLessThan(3 * c.tauErrNs);
    }
  });

  it('records provenance: version, SHA-256 of each input, settings, time and seed', () => {
    const s = clean[0];
    expect(s.provenance.inputs.map((i) => i.role)).toEqual(['decay', 'irf']);
    expect(s.provenance.inputs[0].sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(s.provenance.settings).toMatchObject({
      decay: 'data/T263.15.csv',
      irf: 'data/irf.csv',
      qy: expect.any(Number),
    });
    expect(s.provenance.seed).toBe(1);
    expect(s.rates?.krPerS).toBeGreaterThan(0);
  });

  it('the temperature series recovers Ea, and the titration k_q, within their stated errors (3σ)', () => {
    const arr = runSeries(clean, { model: 'arrhenius', x: 'temperature_k' });
    expect(arr.yName).toBe('knrPerS');
    expect(Math.abs(arr.parameters.eaKjPerMol - EA_KJ)).toBeLessThan(3 * arr.parameters.eaErrKjPerMol);
    expect(arr.parameters.eaErrKjPerMol).toBeLessThan(0.2 * EA_KJ);
    const sv = runSeries(clean, { model: 'stern-volmer', x: 'quencher_m' });
    expect(Math.abs(sv.parameters.kqPerMPerS - KQ)).toBeLessThan(3 * sv.parameters.kqErrPerMPerS);
    expect(Math.abs(sv.parameters.tau0Ns - TAU0)).toBeLessThan(3 * sv.parameters.tau0ErrNs);
    // The batch ran the same series from its settings file.
    const saved = JSON.parse(readFileSync(at('clean', 'series.json'), 'utf8')) as { series: SeriesResult[] };
    expect(saved.series.map((s) => s.model)).toEqual(['arrhenius', 'stern-volmer']);
    expect(saved.series[0].parameters.eaEv).toBeCloseTo(arr.parameters.eaEv, 12);
  });

  it('lumirate series prints the Arrhenius parameters as JSON', () => {
    const r = lumirate('series', at('clean'), '--x', 'temperature_k', '--model', 'arrhenius', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    for (const key of ['eaEv', 'eaErrEv', 'eaKjPerMol', 'k0PerS', 'aPerS'])
      expect(typeof j[key]).toBe('number');
    expect(j.points).toHaveLength(TEMPS.length);
  });

  it('shards 1/3, 2/3 and 3/3 merged equal the unsharded run', () => {
    for (const k of [1, 2, 3]) {
      const r = lumirate(
        'batch',
        at('manifest.csv'),
        '--out',
        at(`shard${k}`),
        '--shard',
        `${k}/3`,
        '--jobs',
        '1',
        '--no-report',
      );
      expect([0, 4]).toContain(r.code);
    }
    const sizes = [1, 2, 3].map((k) => readResults(at(`shard${k}`)).length);
    expect(sizes.reduce((a, b) => a + b, 0)).toBe(15);
    const m = lumirate(
      'merge',
      at('shard1'),
      at('shard2'),
      at('shard3'),
      '--out',
      at('merged'),
      '--no-report',
      '--settings',
      at('settings.json'),
    );
    expect(m.code).toBe(4);
    expect(normalise(readResults(at('merged')))).toEqual(normalise(clean));
    expect(readFileSync(at('merged', 'results.csv'), 'utf8')).toBe(
      readFileSync(at('clean', 'results.csv'), 'utf8'),
    );
    // Merging a shard twice is refused.
    const twice = lumirate('merge', at('shard1'), at('shard1'), '--out', at('twice'));
    expect(twice.code).toBe(2);
    expect(twice.stderr).toMatch(
      /^error: .*shard1\/results\.json: sample '.*' is also in .*shard1\/results\.json/,
    );
  });

  it('a killed batch leaves no partial output, and --resume finishes it to the clean result', async () => {
    const out = at('killed');
    const child = await startAndSignal(out, 'SIGKILL');
    await child.exited;
    // Final outputs are written only at the end, atomically: after a kill they are absent, never partial.
    for (const name of ['results.json', 'results.csv', 'summary.md', 'errors.log'])
      expect(existsSync(join(out, name))).toBe(false);
    const r = lumirate(
      'batch',
      at('manifest.csv'),
      '--out',
      out,
      '--settings',
      at('settings.json'),
      '--jobs',
      '2',
      '--no-report',
      '--resume',
    );
    expect(r.code).toBe(4);
    expect(r.stderr).toMatch(/reused from the previous run/);
    expect(normalise(readResults(out))).toEqual(normalise(clean));
    expect(existsSync(join(out, '.journal.ndjson'))).toBe(false);
    expect(readdirSync(out).filter((n) => n.includes('.tmp-'))).toEqual([]);
  });

  it('Ctrl-C stops cleanly: finished samples are written out, the journal kept, exit 130', async () => {
    const out = at('interrupted');
    const { code, stderr } = await (await startAndSignal(out, 'SIGINT')).exited;
    expect(code).toBe(130);
    expect(stderr).toMatch(/run again with --resume to finish them/);
    const kept = readResults(out);
    expect(kept.length).toBeGreaterThanOrEqual(3);
    expect(kept.length).toBeLessThan(15);
    expect(normalise(kept)).toEqual(normalise(clean.filter((c) => kept.some((k) => k.sample === c.sample))));
    expect(existsSync(join(out, '.journal.ndjson'))).toBe(true);
  });

  it('--resume reruns only what changed', () => {
    const out = at('clean');
    const before = readResults(out);
    const r = lumirate(
      'batch',
      at('manifest.csv'),
      '--out',
      out,
      '--settings',
      at('settings.json'),
      '--jobs',
      '1',
      '--no-report',
      '--resume',
    );
    expect(r.stderr).toContain('batch: 12 ok, 3 failed, 12 reused from the previous run (of 15)');
    expect(readResults(out).filter((s) => s.status === 'ok')).toEqual(
      before.filter((s) => s.status === 'ok'),
    );
  });
});

describe('lumirate batch input files', () => {
  // Named pipes: POSIX only (mkfifo).
  it.skipIf(process.platform === 'win32')(
    'reads a decay through a named pipe as from the file, and names a directory given as a decay',
    async () => {
      const pipe = at('data', 'pipe.csv');
      execFileSync('mkfifo', [pipe]);
      writeFileSync(
        at('pipe-manifest.csv'),
        'sample,decay,irf,components\nfile,data/T263.15.csv,data/irf.csv,1\npiped,data/pipe.csv,data/irf.csv,1\nfolder,data,data/irf.csv,1\n',
      );
      // A writer on the other end feeds the pipe the file's bytes once the batch opens it to read. It
      // is a process of its own, ended in any case, so that a batch that never opens the pipe cannot
      // leave this test waiting on it.
      const writer = spawn('sh', ['-c', 'cat "$0" > "$1"', at('data', 'T263.15.csv'), pipe], {
        stdio: 'ignore',
      });
      let r;
      try {
        r = await runCli(['batch', at('pipe-manifest.csv'), '--out', at('piped'), '--jobs', '1']);
      } finally {
        writer.kill();
      }
      expect(r.code).toBe(4);
      const [file, piped, folder] = readResults(at('piped'));
      expect(piped.status).toBe('ok');
      expect(piped.fit?.components).toEqual(file.fit?.components);
      expect(piped.provenance.inputs[0].sha256).toBe(file.provenance.inputs[0].sha256);
      expect(folder.error).toMatch(/pipe-manifest\.csv line 4, column 8: decay file 'data' is a directory/);
    },
  );
});

describe('lumirate batch --init', () => {
  it('writes the commented settings template and will not overwrite it', () => {
    const file = at('template.json');
    expect(lumirate('batch', '--init', file).code).toBe(0);
    expect(readFileSync(file, 'utf8')).toMatch(/^\/\/ lumirate batch settings/);
    expect(lumirate('batch', '--init', file).code).toBe(2);
  });

  it('names the settings line of a bad value and exits 2 before fitting anything', () => {
    writeFileSync(at('bad-settings.json'), '{\n  "statistic": "least-squares"\n}\n');
    const r = lumirate(
      'batch',
      at('manifest.csv'),
      '--out',
      at('never'),
      '--settings',
      at('bad-settings.json'),
    );
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(
      `error: ${at('bad-settings.json')} line 2, column 3: statistic 'least-squares' must be poisson, neyman or pearson\n`,
    );
  });
});
