import { describe, expect, it } from 'vitest';
import { efficiencyFromSb, efficiencyFromTemperatureSeries } from '../../src/physics/efficiency.js';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('efficiencyFromSb', () => {
  it('is k_r^SB·τ, stated as an estimate', () => {
    // REFERENCE-VALUES §6 (VERIFIED): k_r^SB = 2.092710e8 s⁻¹ for the Gaussian example; τ = 3 ns → η = 0.627813.
    const r = efficiencyFromSb(2.09271e8, 3, { tauErrNs: 0.03 });
    expect(rel(r.eta, 0.627813)).toBeLessThan(1e-6);
    expect(rel(r.etaErr, 0.627813 * 0.01)).toBeLessThan(1e-6);
    expect(r.notes[0]).toMatch(/Estimate.*not a measured quantum yield/);
  });
  it('warns above 1 and refuses non-positive input', () => {
    expect(efficiencyFromSb(2e8, 10).warnings.join(' ')).toMatch(/exceeds 1/);
    expect(() => efficiencyFromSb(0, 3)).toThrow(/must be > 0/);
    expect(() => efficiencyFromSb(2e8, -1)).toThrow(/must be > 0/);
  });
});

// Simulation truth from the Arrhenius worked example, REFERENCE-VALUES §12 (arithmetic VERIFIED; formula common
// practice): k_nr(T) = k0 + A·exp(−Ea/RT), k_r = 1e8 s⁻¹, A = 1e13 s⁻¹, Ea = 30 kJ/mol; τ = 1/(k_r + k_nr).
const R = 8.31446261815;
const tauAt = (T: number, k0: number) => 1e9 / (1e8 + k0 + 1e13 * Math.exp(-30000 / (R * T)));
const temps = [77, 100, 120, 150, 200, 250, 293.15, 313.15];

describe('efficiencyFromTemperatureSeries', () => {
  it('recovers Φ(T) when the cold plateau is purely radiative', () => {
    const pts = temps.map((T) => ({ temperatureK: T, tauNs: tauAt(T, 0) }));
    const r = efficiencyFromTemperatureSeries(pts);
    // At 200 K k_nr/k_r = 1.5e-3 (within the 3 % tolerance); at 250 K 5 % (outside).
    expect(r.plateauMembers).toEqual([77, 100, 120, 150, 200]);
    const at293 = r.points.find((p) => p.temperatureK === 293.15)!;
    // k0 = 0: Φ(293.15 K) = 1e8/(1e8 + 5.514237e7 − 1e7) = 0.689; plateau mean is within 3e-4 of 10 ns.
    const phi = 1e8 * tauAt(293.15, 0) * 1e-9;
    expect(rel(at293.eta, phi)).toBeLessThan(1e-3);
    expect(r.notes.join(' ')).toMatch(/purely radiative/);
    expect(r.notes.join(' ')).toMatch(/77, 100, 120, 150, 200 K/);
  });

  it('overestimates every η by 1/η_plateau when non-radiative decay survives at the plateau', () => {
    // k0 = 1e7 s⁻¹: §12 gives τ(293.15 K) = 6.445693 ns and Φ = 0.644569; the plateau τ is 1/(1.1e8) s, so
    // η = Φ·1.1 = 0.709026 — the documented bias of the assumption.
    const pts = temps.map((T) => ({ temperatureK: T, tauNs: tauAt(T, 1e7) }));
    expect(rel(tauAt(293.15, 1e7), 6.445693)).toBeLessThan(1e-6);
    const r = efficiencyFromTemperatureSeries(pts);
    const at293 = r.points.find((p) => p.temperatureK === 293.15)!;
    expect(rel(at293.eta, 0.644569 * 1.1)).toBeLessThan(1e-3);
  });

  it('uses error bars to decide the plateau and weights the plateau mean by them', () => {
    const pts = [
      { temperatureK: 80, tauNs: 10.0, tauErrNs: 0.1 },
      { temperatureK: 120, tauNs: 10.1, tauErrNs: 0.1 },
      { temperatureK: 160, tauNs: 9.95, tauErrNs: 0.2 },
      { temperatureK: 200, tauNs: 9.0, tauErrNs: 0.1 },
      { temperatureK: 300, tauNs: 5.0, tauErrNs: 0.05 },
    ];
    const r = efficiencyFromTemperatureSeries(pts);
    expect(r.plateauMembers).toEqual([80, 120, 160]);
    // Inverse-variance mean of 10.0 (w 100), 10.1 (w 100), 9.95 (w 25): 2258.75/225 = 10.038889 ns, σ = 1/15 ns
    // (REFERENCE-VALUES §13, VERIFIED with numpy).
    expect(rel(r.plateauTauNs, 10.038889)).toBeLessThan(1e-6);
    expect(rel(r.plateauTauErrNs, 1 / 15)).toBeLessThan(1e-12);
    const at300 = r.points.find((p) => p.temperatureK === 300)!;
    expect(rel(at300.eta, 5 / 10.038889)).toBeLessThan(1e-6);
    expect(rel(at300.etaErr, at300.eta * Math.hypot(0.01, 1 / 15 / 10.038889))).toBeLessThan(1e-6);
  });

  it('warns when there is no plateau', () => {
    const r = efficiencyFromTemperatureSeries([
      { temperatureK: 100, tauNs: 8 },
      { temperatureK: 150, tauNs: 6 },
      { temperatureK: 200, tauNs: 4 },
    ]);
    expect(r.plateauMembers).toEqual([100]);
    expect(r.warnings.join(' ')).toMatch(/No plateau.*upper bounds/);
  });

  it('sorts by temperature and refuses bad points', () => {
    const r = efficiencyFromTemperatureSeries([
      { temperatureK: 300, tauNs: 5 },
      { temperatureK: 77, tauNs: 10 },
      { temperatureK: 100, tauNs: 10.05 },
    ]);
    expect(r.points.map((p) => p.temperatureK)).toEqual([77, 100, 300]);
    expect(() => efficiencyFromTemperatureSeries([{ temperatureK: 77, tauNs: 10 }])).toThrow(
      /at least 2 points/,
    );
    expect(() =>
      efficiencyFromTemperatureSeries([
        { temperatureK: -5, tauNs: 10 },
        { temperatureK: 77, tauNs: 10 },
      ]),
    ).toThrow(/point 1: temperature -5 K/);
  });
});
