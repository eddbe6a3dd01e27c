/**
 * Simulator speed: photons drawn per second by `simulateTcspc` (every photon traced one by one), and
 * the time of the dense-quadrature expectation it computes alongside. Goal: 10⁶ photons well under a
 * second on one core. Figures only; nothing here passes or fails on time.
 */
import { createRng } from '../../src/sim/rng.js';
import { simulateTcspc, type SimulationOptions } from '../../src/sim/simulateTcspc.js';
import { expectedHistogram } from '../../src/sim/expectedHistogram.js';

function best(runs: number, fn: () => void): number {
  let min = Infinity;
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    fn();
    min = Math.min(min, performance.now() - t0);
  }
  return min;
}

const rng = createRng(1);
let sink = 0;
const nDraws = 5e6;
const uniformMs = best(3, () => {
  for (let i = 0; i < nDraws; i++) sink += rng.uniform();
});
const poissonMs = best(3, () => {
  for (let i = 0; i < 1e6; i++) sink += rng.poisson(i % 2 ? 3 : 300);
});
console.log(`uniform: ${((nDraws / uniformMs) * 1e-3).toFixed(1)} million draws/s`);
console.log(`poisson (means 3 and 300): ${((1e6 / poissonMs) * 1e-3).toFixed(1)} million draws/s`);

const cases: [string, Omit<SimulationOptions, 'seed'>][] = [
  [
    'mono-exponential, Gaussian IRF, single pulse',
    { components: [{ tauNs: 3, fraction: 1 }], totalCounts: 1e6, irfCounts: 0 },
  ],
  [
    'bi-exponential, tailed IRF, 50 ns period, shift, background 3',
    {
      components: [
        { tauNs: 0.8, fraction: 0.4 },
        { tauNs: 4, fraction: 0.6 },
      ],
      totalCounts: 1e6,
      periodNs: 50,
      irf: { kind: 'gaussian', fwhmNs: 0.18, centerNs: 2, tailNs: 0.35, tailFraction: 0.08 },
      colorShiftNs: 0.04,
      backgroundPerChannel: 3,
      irfCounts: 0,
    },
  ],
];
console.log('\nsimulateTcspc, 4096 channels × 0.0122 ns, 10⁶ decay photons (best of 3):');
for (const [name, options] of cases) {
  let photons = 0;
  const ms = best(3, () => {
    photons = simulateTcspc({ ...options, seed: 7 }).photonsDrawn;
  });
  console.log(`  ${name}: ${ms.toFixed(0)} ms in all (${photons} photons)`);
}

const quadMs = best(3, () => {
  sink += expectedHistogram({
    channels: 4096,
    binWidthNs: 0.0122,
    periodNs: 50,
    jitter: { kind: 'gaussian', centerNs: 2, sigmaNs: 0.18 / 2.3548 },
    branches: [{ weight: 1, offsetNs: 0.04, terms: [{ coef: 1, tauNs: 4, kind: 'exp' }] }],
  })[100];
});
console.log(`\nexpectedHistogram alone (4096 channels, Gaussian IRF, periodic): ${quadMs.toFixed(0)} ms`);
if (Number.isNaN(sink)) console.log('');
