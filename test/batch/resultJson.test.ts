import { describe, expect, it } from 'vitest';
import { AxisCache, axisDecimals, writeFitCurves } from '../../shared/curvesJson.js';
import { JsonBytes } from '../../shared/jsonBytes.js';
import type { FitCurves, SampleResult } from '../../shared/schema.js';
import { briefJson, resultTexts, sampleResultJson } from '../../src/batch/resultJson.js';
import { runSample } from '../../src/batch/runSample.js';
import { parseManifest } from '../../src/batch/manifest.js';
import { EMPTY_SETTINGS, resolveSampleSettings } from '../../src/batch/settings.js';
import { sha256Hex } from '../../src/batch/hash.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

const ctx = { lumirateVersion: '0.0.0-test', timeUtc: '2026-01-01T00:00:00.000Z' };

/** A two-exponential decay (τ = 1 and 4 ns, truth set here) fitted the way a batch fits it. */
function fittedSample(): SampleResult {
  const sim = simulateTcspc({
    components: [
      { tauNs: 1, fraction: 0.4 },
      { tauNs: 4, fraction: 0.6 },
    ],
    totalCounts: 2e5,
    channels: 1024,
    binWidthNs: 0.0122,
    irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
    backgroundPerChannel: 2,
    irfCounts: 1e5,
    seed: 7,
  });
  const table = (counts: Float64Array) =>
    formatHistogramTable({ timeNs: sim.decay.timeNs, series: [{ name: 'counts', counts }] }, {});
  const decay = table(sim.decay.counts);
  const irf = table(sim.irf.counts);
  const manifest = parseManifest(
    'sample,decay,irf,components,solvent\nτ-sample "1",d.csv,i.csv,2,ethanol\n',
    {
      source: 'm.csv',
    },
  );
  const settings = resolveSampleSettings(manifest.rows[0], EMPTY_SETTINGS, 'm.csv');
  return runSample(
    settings,
    {
      decay: { text: decay, sha256: sha256Hex(new TextEncoder().encode(decay)) },
      irf: { text: irf, sha256: sha256Hex(new TextEncoder().encode(irf)) },
    },
    ctx,
    new Map(),
  );
}

describe('sampleResultJson', () => {
  const result = fittedSample();
  const text = sampleResultJson(result);
  const back = JSON.parse(text) as SampleResult;
  const c = result.fit!.curves;
  const b = back.fit!.curves;

  it('keeps everything but the curves exactly as JSON.stringify writes it', () => {
    const { curves: _a, ...fit } = result.fit!;
    const { curves: _b, ...fitBack } = back.fit!;
    expect(fitBack).toEqual(JSON.parse(JSON.stringify(fit)));
    expect({ ...back, fit: null }).toEqual(JSON.parse(JSON.stringify({ ...result, fit: null })));
    expect(back.sample).toBe('τ-sample "1"');
  });

  it('gives the result without its curves as its line does, the fit last', () => {
    const brief = briefJson(resultTexts(result));
    const { curves: _c, ...fit } = result.fit!;
    const { fit: _f, ...rest } = result;
    expect(brief).toBe(JSON.stringify({ ...rest, fit }));
    // The line is that text with the curves added last in the fit.
    expect(text.startsWith(brief.slice(0, -2))).toBe(true);
  });

  it('puts the fit last in the sample and the curves last in the fit', () => {
    expect(Object.keys(back).at(-1)).toBe('fit');
    expect(Object.keys(back.fit!).at(-1)).toBe('curves');
  });

  it('writes the time axis as the file gave it, counts exactly, model and IRF to 7 significant digits, residuals to 6 decimals', () => {
    // The decay file's times were printed from i × 0.0122 ns: 4 decimals say each one exactly.
    expect(axisDecimals(c.timeNs)).toBe(4);
    expect(text).toContain('"timeNs":[0,0.0122,0.0244,0.0366,');
    b.timeNs.forEach((t, i) => expect(t).toBe(Number(c.timeNs[i].toFixed(4))));
    expect(b.data).toEqual(c.data);
    const rel = (x: number | null, y: number | null) =>
      x === null || y === null ? (x === y ? 0 : Infinity) : x === y ? 0 : Math.abs(x - y) / Math.abs(y);
    b.model.forEach((m, i) => expect(rel(m, c.model[i])).toBeLessThanOrEqual(5e-7));
    b.irf.forEach((m, i) => expect(rel(m, c.irf[i])).toBeLessThanOrEqual(5e-7));
    b.weightedResiduals.forEach((r, i) => {
      const exact = c.weightedResiduals[i];
      if (r === null || exact === null) expect(r).toBe(exact);
      else expect(Math.abs(r - exact)).toBeLessThanOrEqual(5e-7 + 1e-15);
    });
    b.autocorrelation.forEach((r, i) => expect(Math.abs(r - c.autocorrelation[i])).toBeLessThanOrEqual(5e-7));
    expect([b.fitStartIndex, b.fitEndIndex]).toEqual([c.fitStartIndex, c.fitEndIndex]);
  });

  it('is a little over half the size of JSON.stringify, and reads back to the same text when written again', () => {
    expect(text.length).toBeLessThan(0.7 * JSON.stringify(result).length);
    expect(sampleResultJson(back)).toBe(text);
  });

  it('writes a result without a fit, or a fit without curves, as JSON.stringify does', () => {
    const failed: SampleResult = { ...result, status: 'failed', fit: undefined, error: 'x' };
    expect(JSON.parse(sampleResultJson(failed))).toEqual(JSON.parse(JSON.stringify(failed)));
    const { curves: _c, ...brief } = result.fit!;
    const noCurves = { ...result, fit: brief as SampleResult['fit'] };
    expect(JSON.parse(sampleResultJson(noCurves))).toEqual(JSON.parse(JSON.stringify(noCurves)));
  });
});

describe('AxisCache', () => {
  it('writes a repeated time axis from its stored text, and a new one afresh', () => {
    const curves = (timeNs: number[]): FitCurves => ({
      timeNs,
      data: timeNs.map(() => 1),
      model: timeNs.map(() => 1),
      irf: [],
      weightedResiduals: timeNs.map(() => 0),
      autocorrelation: [1],
      fitStartIndex: 0,
      fitEndIndex: timeNs.length - 1,
    });
    const text = (c: FitCurves, cache?: AxisCache) =>
      new TextDecoder().decode(writeFitCurves(new JsonBytes(), c, cache).take());
    const cache = new AxisCache();
    const a = curves(Array.from({ length: 50 }, (_, i) => i * 0.0122));
    const b = curves(Array.from({ length: 50 }, (_, i) => i * 0.025));
    for (const c of [a, a, b, b, a, curves(a.timeNs.slice(0, 49))]) expect(text(c, cache)).toBe(text(c));
    expect(text(b, cache)).toContain('"timeNs":[0,0.025,0.05,');
  });
});

describe('axisDecimals', () => {
  it('finds the decimals a decimal channel width needs', () => {
    expect(axisDecimals(Array.from({ length: 4096 }, (_, i) => i * 0.0122))).toBe(4);
    expect(axisDecimals(Array.from({ length: 100 }, (_, i) => 3 + i * 0.025))).toBe(3);
    expect(axisDecimals(Array.from({ length: 100 }, (_, i) => i * 2))).toBe(0);
  });

  it('keeps a width without a short decimal form to 10⁻⁶ of a channel', () => {
    const t = Array.from({ length: 1000 }, (_, i) => i / 3);
    const d = axisDecimals(t);
    expect(d).toBe(7);
    t.forEach((x) => expect(Math.abs(Number(x.toFixed(d)) - x)).toBeLessThanOrEqual(1e-6 / 3));
  });

  it('gives up on an axis with a non-finite time, which is then written at full precision', () => {
    const t = [0, 0.1, Number.NaN];
    expect(axisDecimals(t)).toBe(-1);
    const curves: FitCurves = {
      timeNs: t,
      data: [1, 2, 3],
      model: [null, 1, 2],
      irf: [],
      weightedResiduals: [null, 0, 0],
      autocorrelation: [1],
      fitStartIndex: 1,
      fitEndIndex: 2,
    };
    const json = new TextDecoder().decode(writeFitCurves(new JsonBytes(), curves).take());
    expect(json).toBe(
      '{"timeNs":[0,0.1,null],"data":[1,2,3],"model":[null,1,2],"irf":[],"weightedResiduals":[null,0,0],"autocorrelation":[1],"fitStartIndex":1,"fitEndIndex":2}',
    );
  });
});
