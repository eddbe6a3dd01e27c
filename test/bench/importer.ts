/**
 * Importer throughput: how fast text becomes a histogram, for file sizes a TCSPC user meets (4096
 * to 65536 channels, several decays per file) and for photon arrival lists. Prints figures only.
 *
 * Each case prints its first call (the code still interpreted or half compiled, as in a one-file
 * command), then the best and median of timed calls after a warm-up (as in a batch, where one thread
 * reads hundreds of files): the best is the least disturbed by other load on the machine.
 */
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseArrivalsText } from '../../src/io/parseArrivals.js';
import { decodeText } from '../../src/io/decodeText.js';
import { cpus, loadavg } from 'node:os';

function decayFile(channels: number, decays: number, sep: string, decimalComma: boolean): string {
  const lines = [
    `# bin_width_ps: 12.207`,
    ['time_ns', ...Array.from({ length: decays }, (_, k) => `d${k + 1}`)].join(sep),
  ];
  for (let i = 0; i < channels; i++) {
    const t = (i * 0.012207).toFixed(6);
    const row = [decimalComma ? t.replace('.', ',') : t];
    for (let k = 0; k < decays; k++) row.push(String(Math.round(1e4 * Math.exp(-i / (300 + 100 * k)))));
    lines.push(row.join(sep));
  }
  return lines.join('\n') + '\n';
}

/** Calls `fn` until it has run `minCalls` times or for `minMs`, whichever comes first. */
function warmUp(fn: () => unknown, minCalls: number, minMs: number): void {
  const t0 = performance.now();
  for (let k = 0; k < minCalls && performance.now() - t0 < minMs; k++) fn();
}

function time(label: string, bytes: number, fn: () => unknown, reps: number): void {
  let t0 = performance.now();
  fn();
  const first = performance.now() - t0;
  warmUp(fn, 200, 300);
  const ms: number[] = [];
  for (let r = 0; r < reps; r++) {
    t0 = performance.now();
    fn();
    ms.push(performance.now() - t0);
  }
  ms.sort((a, b) => a - b);
  const best = ms[0];
  const median = ms[reps >> 1];
  console.log(
    `${label.padEnd(46)} ${first.toFixed(2).padStart(8)} ${best.toFixed(2).padStart(8)} ${median.toFixed(2).padStart(8)} ms ${((bytes / 1e6 / best) * 1e3).toFixed(0).padStart(7)} MB/s`,
  );
}

console.log(
  `load average ${loadavg()
    .map((x) => x.toFixed(1))
    .join(' ')} on ${cpus().length} cores (figures scale with it)`,
);
console.log(
  `${'case'.padEnd(46)} ${'first'.padStart(8)} ${'best'.padStart(8)} ${'median'.padStart(8)}    ${'best'.padStart(7)}`,
);
for (const [channels, decays, sep, comma] of [
  [4096, 1, ',', false],
  [65536, 1, ',', false],
  [65536, 1, ';', true],
  [65536, 1, ' ', false],
  [65536, 8, '\t', false],
] as const) {
  const text = decayFile(channels, decays, sep, comma);
  const name =
    sep === ',' ? 'comma' : sep === ';' ? 'semicolon, decimal comma' : sep === ' ' ? 'whitespace' : 'tab';
  time(
    `${channels} ch × ${decays} decay(s), ${name}`,
    text.length,
    () => parseHistogramText(text, { source: 'bench', column: decays > 1 ? 'd3' : undefined }),
    channels > 4096 ? 20 : 200,
  );
}
// The general reader's pace, for comparison: a comment line among the data sends the file there.
const general = decayFile(4096, 1, ',', false).replace('\n0.012207,', '\n# a late comment\n0.012207,');
time(
  '4096 ch × 1 decay(s), comma, general reader',
  general.length,
  () => parseHistogramText(general, { source: 'bench' }),
  200,
);
const bytes = new TextEncoder().encode(decayFile(4096, 1, ',', false));
time('decode 4096 ch (UTF-8 bytes → text)', bytes.length, () => decodeText(bytes, 'bench'), 200);
const arrivals =
  'arrival_ps\n' +
  Array.from({ length: 1_000_000 }, (_, i) => ((i * 7919) % 50000).toString()).join('\n') +
  '\n';
time(
  '1e6 photon arrivals → 4096 channels',
  arrivals.length,
  () => parseArrivalsText(arrivals, { source: 'bench', binWidthNs: 50 / 4096 }),
  3,
);
