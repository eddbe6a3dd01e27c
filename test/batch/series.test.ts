import { describe, expect, it } from 'vitest';
import { fitArrhenius, runSeries, weightedLine, type XY } from '../../src/batch/series.js';
import { createRng } from '../../src/sim/rng.js';
import { fakeSample } from './fakeResults.js';

// REFERENCE-VALUES §12 (Arrhenius k_nr, worked values VERIFIED arithmetic; law from Lakowicz, from memory):
// k_r = 1e8, k0 = 1e7, A = 1e13 s⁻¹, Ea = 30 kJ/mol → k_nr(293.15 K) = 5.514237e7 s⁻¹, τ(313.15 K) = 4.782885 ns.
const R = 8.31446261815; // CODATA 2018, J mol⁻¹ K⁻¹ (REFERENCE-VALUES §3)
const K0 = 1e7;
const A = 1e13;
const EA = 30e3;
const knr = (t: number) => K0 + A * Math.exp(-EA / (R * t));
const temperatures = [253.15, 273.15, 293.15, 313.15, 333.15, 353.15, 373.15];

describe('weightedLine', () => {
  it('matches a hand-computed weighted fit', () => {
    // Three points on y = 1 + 2x with unit errors: exact line, covariance from the normal equations
    // (sw = 3, sx = 3, sxx = 5, det = 6: σa² = 5/6, σb² = 3/6; common practice, any regression text).
    const p: XY[] = [0, 1, 2].map((x) => ({ sample: `s${x}`, x, y: 1 + 2 * x, yErr: 1 }));
    const l = weightedLine(p);
    expect(l.a).toBeCloseTo(1, 12);
    expect(l.b).toBeCloseTo(2, 12);
    expect(l.aErr).toBeCloseTo(Math.sqrt(5 / 6), 12);
    expect(l.bErr).toBeCloseTo(Math.sqrt(0.5), 12);
    expect(l.chi2).toBeCloseTo(0, 20);
  });
});

describe('Arrhenius series', () => {
  it('the model reproduces the worked k_nr(293.15 K) of REFERENCE-VALUES §12', () => {
    expect(knr(293.15)).toBeCloseTo(5.514237e7, -1); // 8 significant digits
    expect(1e9 / (1e8 + knr(313.15))).toBeCloseTo(4.782885, 5);
  });

  it('recovers k0, A and Ea exactly from noise-free points', () => {
    const points = temperatures.map((t) => ({ sample: `T${t}`, x: t, y: knr(t), yErr: 0.02 * knr(t) }));
    const f = fitArrhenius(points);
    expect(f.eaJPerMol / EA).toBeCloseTo(1, 7);
    expect(f.k0PerS / K0).toBeCloseTo(1, 6);
    expect(f.aPerS / A).toBeCloseTo(1, 6);
    expect(f.converged).toBe(true);
  });

  it('its Ea error bar covers the truth about 68 % of the time (simulated series with known truth)', () => {
    const rng = createRng(7);
    let within = 0;
    const reps = 300;
    for (let r = 0; r < reps; r++) {
      const points = temperatures.map((t) => {
        const sd = 0.03 * knr(t);
        return { sample: `T${t}`, x: t, y: knr(t) + sd * rng.normal(), yErr: sd };
      });
      const f = fitArrhenius(points);
      if (Math.abs(f.eaJPerMol - EA) <= f.eaErrJPerMol) within++;
    }
    // Binomial, p = 0.683, n = 300: SD 0.027; accept ±2.5 SD (the fit is nonlinear, so only close to Gaussian).
    expect(within / reps).toBeGreaterThan(0.615);
    expect(within / reps).toBeLessThan(0.75);
  });

  it('reports Ea in kJ/mol and eV from the rates of a batch, with residuals per sample', () => {
    const samples = temperatures.map((t) => {
      const s = fakeSample(`T${t}`, 1e9 / (1e8 + knr(t)), 0.01, { temperature_k: String(t) });
      s.rates = { knrPerS: knr(t), knrErrPerS: 0.02 * knr(t) } as never;
      return s;
    });
    const sr = runSeries(samples, { model: 'arrhenius', x: 'temperature_k' });
    expect(sr.yName).toBe('knrPerS');
    expect(sr.parameters.eaKjPerMol).toBeCloseTo(30, 5);
    // 1 eV per particle = N_A·e = 96 485.332 12 J/mol (CODATA 2018 exact constants, REFERENCE-VALUES §3).
    expect(sr.parameters.eaEv).toBeCloseTo(30e3 / 96485.33212, 7);
    expect(sr.parameters.eaErrEv * 96485.33212).toBeCloseTo(sr.parameters.eaErrKjPerMol * 1000, 3);
    expect(sr.points.map((p) => p.sample)).toEqual(temperatures.map((t) => `T${t}`));
    for (const p of sr.points) expect(Math.abs(p.residual!)).toBeLessThan(1e-5);
  });

  it('without yields fits the total decay rate and says so', () => {
    const samples = temperatures.map((t) =>
      fakeSample(`T${t}`, 1e9 / (1e8 + knr(t)), 0.005, { temperature_k: String(t) }),
    );
    const sr = runSeries(samples, { model: 'arrhenius', x: 'temperature_k' });
    expect(sr.yName).toBe('decayRatePerS');
    expect(sr.notes[0]).toBe('no quantum yields: fitted the total decay rate 1/τ, so k₀ includes k_r');
    expect(sr.parameters.k0PerS / (K0 + 1e8)).toBeCloseTo(1, 4);
  });
});

describe('Stern–Volmer series', () => {
  // REFERENCE-VALUES §12: τ0 = 4 ns, k_q = 1e10 M⁻¹ s⁻¹, [Q] = 0.05 M → K_SV = 40 M⁻¹, τ = 1.333333 ns.
  const q = [0, 0.01, 0.02, 0.03, 0.04, 0.05];
  const tau = (c: number) => 4 / (1 + 40 * c);

  it('the worked quenched lifetime of REFERENCE-VALUES §12', () => {
    expect(tau(0.05)).toBeCloseTo(1.333333, 6);
  });

  it('recovers k_q, τ0 and K_SV from a titration', () => {
    const samples = q.map((c) => fakeSample(`Q${c}`, tau(c), 0.01 * tau(c), { quencher_m: String(c) }));
    const sr = runSeries(samples, { model: 'stern-volmer', x: 'quencher_m' });
    expect(sr.parameters.kqPerMPerS / 1e10).toBeCloseTo(1, 8);
    expect(sr.parameters.tau0Ns).toBeCloseTo(4, 8);
    expect(sr.parameters.ksvPerM).toBeCloseTo(40, 6);
    expect(sr.points[5].y).toBeCloseTo(3, 8); // τ0/τ = 1 + 40·0.05
    expect(sr.parameters.kqErrPerMPerS).toBeGreaterThan(0);
  });
});

describe('FRET series', () => {
  it('gives E = 0.75 and r/R0 = 0.832683 for τ_DA = 1 ns, τ_D = 4 ns (REFERENCE-VALUES §12)', () => {
    const samples = [
      fakeSample('D', 4, 0.02, { acceptor: '0' }),
      fakeSample('DA', 1, 0.01, { acceptor: '1' }),
    ];
    const sr = runSeries(samples, { model: 'fret', x: 'acceptor', r0Nm: 5 });
    expect(sr.points).toHaveLength(1);
    expect(sr.points[0].y).toBeCloseTo(0.75, 12);
    expect(sr.parameters.rNm_DA / 5).toBeCloseTo(0.832683, 6);
    // σ_E = (τ_DA/τ_D)·sqrt((0.01/1)² + (0.02/4)²), first-order propagation
    expect(sr.points[0].yErr).toBeCloseTo(0.25 * Math.hypot(0.01, 0.005), 12);
  });
});

describe('efficiency series', () => {
  it('divides each lifetime by the low-temperature plateau', () => {
    const samples = [
      fakeSample('a', 5.0, 0.05, { temperature_k: '80' }),
      fakeSample('b', 5.02, 0.05, { temperature_k: '100' }),
      fakeSample('c', 4.0, 0.04, { temperature_k: '250' }),
      fakeSample('d', 2.5, 0.03, { temperature_k: '300' }),
    ];
    const sr = runSeries(samples, { model: 'efficiency', x: 'temperature_k' });
    expect(sr.parameters.tauPlateauNs).toBeCloseTo(5.01, 10);
    expect(sr.points.find((p) => p.sample === 'd')!.y).toBeCloseTo(2.5 / 5.01, 10);
  });

  it('refuses a column no sample has, naming the columns there are', () => {
    expect(() =>
      runSeries([fakeSample('a', 1, 0.1, { temp: '1' })], { model: 'efficiency', x: 'temperature_k' }),
    ).toThrow("no sample has a 'temperature_k' column (metadata columns: temp)");
  });
});
