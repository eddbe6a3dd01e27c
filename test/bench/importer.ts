/**
 * Importer throughput: how fast text becomes a histogram, for file sizes a TCSPC user meets (4096
 * to 65536 channels, several decays per file) and for photon arrival lists. Prints figures only.
 */
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseArrivalsText } from '../../src/io/parseArrivals.js';
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

/** Best and median of `reps` timed runs after a warm-up: the best is the least disturbed by other load. */
function time(label: string, bytes: number, fn: () => unknown, reps: number): void {
  fn();
  const ms: number[] = [];
  for (let r = 0; r < reps; r++) {
    const t0 = performance.now();
    fn();
    ms.push(performance.now() - t0);
  }
  ms.sort((a, b) => a - b);
  const best = ms[0];
  const median = ms[reps >> 1];
  console.log(
    `${label.padEnd(46)} ${best.toFixed(1).padStart(8)} ${median.toFixed(1).padStart(8)} ms ${((bytes / 1e6 / best) * 1e3).toFixed(1).padStart(7)} MB/s`,
  );
}

console.log(
  `load average ${loadavg()
    .map((x) => x.toFixed(1))
    .join(' ')} on ${cpus().length} cores (figures scale with it)`,
);
console.log(`${'case'.padEnd(46)} ${'best'.padStart(8)} ${'median'.padStart(8)}    ${'best'.padStart(7)}`);
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
    10,
  );
}
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
