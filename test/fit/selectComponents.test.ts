import { describe, expect, it } from 'vitest';
import type { FitResult } from '../../shared/schema.js';
import type { Histogram } from '../../src/io/types.js';
import { fitModel } from '../../src/fit/fitModel.js';
import { degeneracyOf, meritOf, selectComponents, type FitModelFn } from '../../src/fit/selectComponents.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';
import { fitResultWith } from '../physics/fitFixture.js';

/** A FitResult with just the numbers model selection reads: 1000 fitted channels, 2n + 2 parameters. */
function stubFit(
  taus: number[],
  deviance: number,
  opts: { errs?: number[]; fractions?: number[] } = {},
): FitResult {
  const n = taus.length;
  const nPoints = 1000;
  const k = 2 * n + 2;
  const base = fitResultWith(
    taus.map((tauNs, i) => ({ tauNs, tauErrNs: opts.errs?.[i] ?? 0.01 * tauNs, amplitude: 100 })),
  );
  return {
    ...base,
    components: base.components.map((c, i) => ({
      ...c,
      intensityFraction: opts.fractions?.[i] ?? 1 / n,
      amplitudeFraction: opts.fractions?.[i] ?? 1 / n,
    })),
    chi2Reduced: deviance / (nPoints - k),
    chi2: deviance,
    deviance,
    deviancePerDof: deviance / (nPoints - k),
    dof: nPoints - k,
    aic: deviance + 2 * k,
    bic: deviance + k * Math.log(nPoints),
    curves: { ...base.curves, fitStartIndex: 0, fitEndIndex: nPoints - 1 },
  };
}

const dummy: Histogram = {
  timeNs: new Float64Array(8),
  counts: new Float64Array(8),
  binWidthNs: 0.025,
  metadata: {},
  source: 'stub',
  warnings: [],
};

/** A fitter that returns prepared fits by component count and records what it was asked. */
function scripted(fits: Record<number, FitResult>): { fit: FitModelFn; asked: number[] } {
  const asked: number[] = [];
  return {
    asked,
    fit: (_d, _i, o) => {
      asked.push(o.components);
      const f = fits[o.components];
      if (!f) throw new Error(`no ${o.components}-component fit`);
      return f;
    },
  };
}

describe('degeneracyOf', () => {
  it('accepts well-separated, well-determined components', () => {
    expect(degeneracyOf(stubFit([0.8, 3.5], 1000), {})).toBeNull();
  });

  it('flags a lifetime on its bound, merged lifetimes, overlapping errors and a vanishing component', () => {
    expect(degeneracyOf(stubFit([0.005, 3.5], 1000), {})).toMatch(/τ1 sits at its lower bound 0\.005/);
    expect(degeneracyOf(stubFit([0.8, 20], 1000), { bounds: { tau2Ns: { max: 20 } } })).toMatch(
      /upper bound 20/,
    );
    expect(degeneracyOf(stubFit([3.4, 3.5], 1000), {})).toMatch(/not resolved/);
    expect(degeneracyOf(stubFit([2.0, 3.0], 1000, { errs: [0.4, 0.4] }), {})).toMatch(/not resolved/);
    expect(degeneracyOf(stubFit([0.8, 3.5, 9], 1000, { fractions: [0.5, 0.495, 0.005] }), {})).toMatch(
      /component 3 carries under 1 %/,
    );
  });

  it('ignores a lifetime the user held fixed', () => {
    expect(degeneracyOf(stubFit([0.005, 3.5], 1000), { fix: { tau1Ns: 0.005 } })).toBeNull();
  });
});

describe('meritOf', () => {
  it('is the deviance for Poisson fits and the minimised χ² (from AIC) for least squares', () => {
    const poisson = stubFit([2], 1234.5);
    expect(meritOf(poisson)).toBe(1234.5);
    // 1000 channels, dof 996 ⇒ k = 4 free parameters; AIC = merit + 2k (Akaike 1974).
    const neyman: FitResult = { ...stubFit([2], 1234.5), statistic: 'neyman', chi2: 999, aic: 1100 + 8 };
    expect(meritOf(neyman)).toBe(1100);
  });
});

describe('selectComponents with a scripted fitter', () => {
  it('adds a component only while the deviance falls significantly and BIC falls, and says why', () => {
    // ΔD(1→2) = 900 with 2 more parameters; ΔD(2→3) = 3.1 ⇒ p = e^(−3.1/2) = 0.21 (χ²₂ closed form),
    // ΔBIC = −3.1 + 2 ln 1000 = +10.7.
    const s = scripted({
      1: stubFit([2], 2000),
      2: stubFit([0.8, 3.5], 1100),
      3: stubFit([0.5, 1.5, 3.6], 1096.9),
    });
    const r = selectComponents(dummy, null, {}, s.fit);
    expect(r.nComponents).toBe(2);
    expect(s.asked).toEqual([1, 2, 3]);
    const sel = r.componentSelection!;
    expect(sel.chosen).toBe(2);
    expect(sel.candidates.map((c) => c.nComponents)).toEqual([1, 2, 3]);
    expect(sel.candidates[0].lrtPValue).toBeUndefined();
    expect(sel.candidates[2].lrtPValue).toBeCloseTo(Math.exp(-1.55), 12);
    expect(sel.reason).toMatch(/^2 components: the second lowered the deviance by 900 \(p < 0\.0001\)/);
    expect(sel.reason).toContain('the third lowered the deviance by 3.1 (p = 0.21) and raised BIC by 11');
    expect(sel.reason).toMatch(/approximate/);
  });

  it('stops at a degenerate fit even when it lowers the deviance', () => {
    const s = scripted({
      1: stubFit([2], 2000),
      2: stubFit([1.9, 2.0], 1900),
      3: stubFit([0.5, 1.5, 3.6], 1000),
    });
    const r = selectComponents(dummy, null, {}, s.fit);
    expect(r.nComponents).toBe(1);
    expect(s.asked).toEqual([1, 2]);
    expect(r.componentSelection!.reason).toMatch(
      /^1 component: a 2-component fit is degenerate \(τ1 = 1\.90 ns and τ2 = 2\.00 ns are not resolved\)/,
    );
  });

  it('stops when a larger fit throws, keeping what it had', () => {
    const s = scripted({ 1: stubFit([2], 2000), 2: stubFit([0.8, 3.5], 1100) });
    const r = selectComponents(dummy, null, {}, s.fit);
    expect(r.nComponents).toBe(2);
    expect(r.componentSelection!.reason).toContain('a 3-component fit failed (no 3-component fit)');
  });

  it('goes no further than maxComponents', () => {
    const s = scripted({
      1: stubFit([2], 2000),
      2: stubFit([0.8, 3.5], 1100),
      3: stubFit([0.3, 1, 4], 1000),
    });
    const r = selectComponents(dummy, null, {}, s.fit, { maxComponents: 2 });
    expect(r.nComponents).toBe(2);
    expect(s.asked).toEqual([1, 2]);
    expect(r.componentSelection!.reason).toContain('2 is the most tried');
  });

  it('returns a new object and leaves the candidate fits untouched', () => {
    const one = stubFit([2], 2000);
    const s = scripted({ 1: one, 2: stubFit([1.9, 2.0], 1999) });
    const r = selectComponents(dummy, null, {}, s.fit);
    expect(r).not.toBe(one);
    expect(one.componentSelection).toBeUndefined();
  });
});

describe('selectComponents on simulated decays', () => {
  // Truth set by the simulation: well-separated lifetimes, 2·10⁴ counts in the peak (above the ≈10⁴
  // usually asked for multi-exponential analysis, REFERENCE-VALUES §11), 0.12 ns Gaussian IRF.
  function simulate(components: { tauNs: number; fraction: number }[], seed: number) {
    return simulateTcspc({
      components,
      fractionKind: 'amplitude',
      peakCounts: 2e4,
      channels: 1024,
      binWidthNs: 0.04,
      periodNs: null,
      irf: { kind: 'gaussian', fwhmNs: 0.12, centerNs: 2 },
      backgroundPerChannel: 2,
      irfCounts: 2e5,
      seed,
    });
  }

  it('picks 1, 2 and 3 components for mono-, bi- and tri-exponential decays', () => {
    const cases = [
      { comps: [{ tauNs: 3, fraction: 1 }], seed: 11 },
      {
        comps: [
          { tauNs: 0.8, fraction: 0.5 },
          { tauNs: 3.5, fraction: 0.5 },
        ],
        seed: 12,
      },
      {
        comps: [
          { tauNs: 0.3, fraction: 0.4 },
          { tauNs: 1.5, fraction: 0.3 },
          { tauNs: 6, fraction: 0.3 },
        ],
        seed: 13,
      },
    ];
    for (const c of cases) {
      const sim = simulate(c.comps, c.seed);
      const r = selectComponents(sim.decay, sim.irf, {}, fitModel);
      const n = c.comps.length;
      expect(r.nComponents).toBe(n);
      expect(r.componentSelection!.chosen).toBe(n);
      expect(r.componentSelection!.reason.startsWith(`${n} component${n > 1 ? 's' : ''}:`)).toBe(true);
      r.components.forEach((comp, j) => {
        expect(Math.abs(comp.tauNs - c.comps[j].tauNs)).toBeLessThan(4 * comp.tauErrNs);
      });
      // The candidates one beyond the choice were tried and rejected (or failed); none beyond that.
      expect(r.componentSelection!.candidates.length).toBeLessThanOrEqual(n + 1);
    }
  });
});
