import { beforeAll, describe, expect, it } from 'vitest';
import { fitGlobal, type GlobalFitResult, type GlobalMember } from '../../src/fit/fitGlobal.js';
import { InputError } from '../../src/errors.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

// Simulated group whose truth we set: four decays sharing τ = 0.8 and 3.5 ns, amplitude fractions of
// the short component 0.2 … 0.8, 5000 counts in the peak, Gaussian IRF 0.15 ns FWHM.
const TAUS = [0.8, 3.5];
const SHORT_FRACTIONS = [0.2, 0.4, 0.6, 0.8];

function member(fraction: number, k: number): GlobalMember {
  const sim = simulateTcspc({
    components: [
      { tauNs: TAUS[0], fraction },
      { tauNs: TAUS[1], fraction: 1 - fraction },
    ],
    fractionKind: 'amplitude',
    peakCounts: 5000,
    channels: 1024,
    binWidthNs: 0.025,
    periodNs: null,
    irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
    backgroundPerChannel: 2,
    irfCounts: 1e5,
    seed: 4100 + k,
  });
  return { sample: `q${k + 1}`, decay: sim.decay, irf: sim.irf };
}

describe('fitGlobal on a simulated group with shared lifetimes', () => {
  let members: GlobalMember[];
  let result: GlobalFitResult;
  beforeAll(() => {
    members = SHORT_FRACTIONS.map(member);
    result = fitGlobal(members, { components: 2 }, { group: 'titration' });
  });

  it('recovers both lifetimes within 3 standard errors', () => {
    const g = result.global;
    expect(g.group).toBe('titration');
    expect(g.members).toEqual(['q1', 'q2', 'q3', 'q4']);
    g.components.forEach((c, j) => {
      expect(c.tauErrNs).toBeGreaterThan(0);
      expect(Math.abs(c.tauNs - TAUS[j])).toBeLessThan(3 * c.tauErrNs);
    });
    // A correct model: χ²_red within 3 SD of 1, SD ≈ sqrt(2/ν) (REFERENCE-VALUES §11).
    expect(Math.abs(g.chi2Reduced - 1)).toBeLessThan(3 * Math.sqrt(2 / g.dof));
  });

  it('gives smaller lifetime errors than any member fitted on its own', () => {
    const ratios = result.global.components.map((c, j) =>
      result.separate.map((s) => c.tauErrNs / s!.components[j].tauErrNs),
    );
    // Measured with these seeds: τ1 ratios 0.11, 0.25, 0.42, 0.66; τ2 ratios 0.54, 0.45, 0.37, 0.24.
    for (const row of ratios) for (const r of row) expect(r).toBeLessThan(0.8);
    // Better too than pooling the separate estimates by inverse variance, which ignores that linking
    // one lifetime also pins the other through their correlation in every member.
    result.global.components.forEach((c, j) => {
      const pooled = 1 / Math.sqrt(result.separate.reduce((s, f) => s + f!.components[j].tauErrNs ** -2, 0));
      expect(c.tauErrNs).toBeLessThan(pooled);
    });
  });

  it('has errors that match the rise of the summed deviance when a lifetime is held one error away', () => {
    // Wilks: the profile of −2 ln L rises by 1 at one standard error (common practice). Holding τ1 at
    // τ̂1 + σ1 and refitting everything else globally must raise the summed deviance by about 1.
    const [c1] = result.global.components;
    const held = fitGlobal(members, { components: 2, fix: { tau1Ns: c1.tauNs + c1.tauErrNs } });
    const sum = (r: GlobalFitResult) => r.members.reduce((s, m) => s + m.deviance, 0);
    const rise = sum(held) - sum(result);
    // Measured: 0.9995.
    expect(rise).toBeGreaterThan(0.9);
    expect(rise).toBeLessThan(1.1);
    expect(held.global.components[0].tauErrNs).toBe(0);
  });

  it('reports each member at the shared lifetimes with its own statistics', () => {
    const g = result.global;
    const totalDof = result.members.reduce((s, m) => s + m.dof, 0);
    // Each member held both lifetimes; the global fit frees them once for the whole group.
    expect(g.dof).toBe(totalDof - 2);
    const devSum = result.members.reduce((s, m) => s + m.deviance, 0);
    expect(g.deviancePerDof).toBeCloseTo(devSum / g.dof, 12);
    result.members.forEach((m, k) => {
      expect(m.components.map((c) => c.tauNs)).toEqual(g.components.map((c) => c.tauNs));
      expect(m.components.map((c) => c.tauErrNs)).toEqual(g.components.map((c) => c.tauErrNs));
      expect(m.components.some((c) => c.fixed)).toBe(false);
      expect(m.fixed).toEqual({});
      // Amplitude fraction of the short component as simulated (truth set by the simulation).
      expect(Math.abs(m.components[0].amplitudeFraction - SHORT_FRACTIONS[k])).toBeLessThan(0.03);
      expect(m.warnings.some((w) => w.includes('linked across group titration'))).toBe(true);
      // Linking can only cost a member fit quality against its own free fit.
      expect(m.deviance).toBeGreaterThanOrEqual(result.separate[k]!.deviance - 1e-6);
    });
  });
});

describe('fitGlobal input checks', () => {
  it('refuses an empty group', () => {
    expect(() => fitGlobal([], { components: 2 })).toThrow(InputError);
    expect(() => fitGlobal([], { components: 2 })).toThrow('a global fit needs at least one member');
  });

  it('names the member whose decay cannot be fitted', () => {
    const good = member(0.5, 0);
    const empty: GlobalMember = {
      sample: 'blank',
      irf: good.irf,
      decay: { ...good.decay, counts: new Float64Array(good.decay.counts.length), source: 'blank.csv' },
    };
    expect(() => fitGlobal([good, empty], { components: 2 })).toThrow(InputError);
    expect(() => fitGlobal([good, empty], { components: 2 })).toThrow('blank.csv: the decay holds no counts');
  });
});
