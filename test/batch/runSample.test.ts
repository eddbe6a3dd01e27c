import { describe, expect, it } from 'vitest';
import { sha256Hex } from '../../src/batch/hash.js';
import { parseManifest } from '../../src/batch/manifest.js';
import {
  failedSample,
  runGroup,
  runSample,
  sampleHistograms,
  type SampleInputs,
} from '../../src/batch/runSample.js';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { EMPTY_SETTINGS, resolveSampleSettings } from '../../src/batch/settings.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

const ctx = { lumirateVersion: '0.0.0-test', timeUtc: '2026-01-01T00:00:00.000Z' };

/** Decays sharing τ = 1 and 4 ns (truth set here) with different intensity fractions, and their IRF. */
function simulatedGroup(fractions: number[]): { texts: string[]; irfText: string } {
  let irfText = '';
  const texts = fractions.map((f, k) => {
    const sim = simulateTcspc({
      components: [
        { tauNs: 1, fraction: f },
        { tauNs: 4, fraction: 1 - f },
      ],
      totalCounts: 1e5,
      channels: 1024,
      binWidthNs: 0.05,
      irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 1.5 },
      backgroundPerChannel: 1,
      irfCounts: 1e5,
      seed: 40 + k,
    });
    if (!irfText)
      irfText = formatHistogramTable(
        { timeNs: sim.irf.timeNs, series: [{ name: 'counts', counts: sim.irf.counts }] },
        {},
      );
    return formatHistogramTable(
      { timeNs: sim.decay.timeNs, series: [{ name: 'counts', counts: sim.decay.counts }] },
      {},
    );
  });
  return { texts, irfText };
}

function file(text: string) {
  return { text, sha256: sha256Hex(text) };
}

describe('runGroup', () => {
  it('linked lifetimes come out tighter than separate fits and still cover the truth', () => {
    const fractions = [0.3, 0.5, 0.7];
    const { texts, irfText } = simulatedGroup(fractions);
    const csv = [
      'sample,decay,irf,components,group',
      ...fractions.map((_, k) => `m${k},m${k}.csv,irf.csv,2,g`),
    ].join('\n');
    const manifest = parseManifest(csv, { source: 'm.csv' });
    const members = manifest.rows.map((row, k) => ({
      settings: resolveSampleSettings(row, EMPTY_SETTINGS, 'm.csv'),
      inputs: { decay: file(texts[k]), irf: file(irfText) } as SampleInputs,
    }));
    const linked = runGroup(members, ctx);
    const separate = members.map((m) => runSample({ ...m.settings, group: null }, m.inputs, ctx));
    const truth = [1, 4];
    for (const r of linked) {
      expect(r.status).toBe('ok');
      expect(r.group).toBe('g');
      expect(r.global!.members).toEqual(['m0', 'm1', 'm2']);
    }
    const g = linked[0].global!;
    g.components.forEach((c, j) => {
      expect(Math.abs(c.tauNs - truth[j])).toBeLessThan(3 * c.tauErrNs);
      // Each member alone determines τ_j less well than the three together.
      for (const s of separate) expect(c.tauErrNs).toBeLessThan(s.fit!.components[j].tauErrNs);
    });
    // Each member keeps its own amplitudes: the fractions follow the simulated ones.
    linked.forEach((r, k) =>
      expect(Math.abs(r.fit!.components[0].intensityFraction - fractions[k])).toBeLessThan(0.05),
    );
  });

  it('refuses members that disagree on the model, naming both', () => {
    const csv = 'sample,decay,components,group\na,a.csv,2,g\nb,b.csv,3,g\n';
    const m = parseManifest(csv, { source: 'm.csv' });
    const members = m.rows.map((row) => ({
      settings: resolveSampleSettings(row, EMPTY_SETTINGS, 'm.csv'),
      inputs: { decay: file('') } as SampleInputs,
    }));
    expect(() => runGroup(members, ctx)).toThrow(
      "group 'g': sample 'b' has components 3 but 'a' has 2; members of a group are fitted together and must agree",
    );
  });
});

describe('runSample', () => {
  it('a garbage decay throws an error naming the file, which failedSample turns into a reported result', () => {
    const m = parseManifest('sample,decay\nx,junk.csv\n', { source: 'm.csv' });
    const s = resolveSampleSettings(m.rows[0], EMPTY_SETTINGS, 'm.csv');
    const inputs = { decay: file('hello\nworld, again, more\n') };
    let err: unknown;
    try {
      runSample(s, inputs, ctx);
    } catch (e) {
      err = e;
    }
    expect(String(err)).toMatch(/junk\.csv/);
    const r = failedSample(s, err, ctx, s, inputs);
    expect(r.status).toBe('failed');
    expect(r.error).toMatch(/^junk\.csv/);
    expect(r.provenance.inputs).toEqual([
      { role: 'decay', path: 'junk.csv', sha256: sha256Hex('hello\nworld, again, more\n') },
    ]);
  });

  it('reads a multi-decay file once for its columns, as the command line reads file#column', () => {
    // Three columns of one file: two of counts, one with a negative count in its second data row.
    const text =
      'time_ns,a,b,bad\n' +
      Array.from(
        { length: 64 },
        (_, i) => `${(i * 0.05).toFixed(2)},${100 + i},${200 - i},${i === 1 ? -3 : 5}`,
      ).join('\n') +
      '\n';
    const m = parseManifest('sample,decay,components\nA,f.csv#a,1\nB,f.csv#b,1\nC,f.csv#bad,1\n', {
      source: 'm.csv',
    });
    const [a, b, c] = m.rows.map((row) => resolveSampleSettings(row, EMPTY_SETTINGS, 'm.csv'));
    const inputs = { decay: file(text) };
    const decayOf = (s: typeof a) => sampleHistograms(s, inputs).decay;
    const ha = decayOf(a);
    const hb = decayOf(b);
    // Reference: each column parsed on its own from the text.
    for (const [h, column] of [
      [ha, 'a'],
      [hb, 'b'],
    ] as const) {
      const alone = parseHistogramText(text, { source: 'f.csv', column });
      expect(h.source).toBe(`f.csv#${column}`);
      expect(Array.from(h.counts)).toEqual(Array.from(alone.counts));
      expect(Array.from(h.timeNs)).toEqual(Array.from(alone.timeNs));
      expect(h.binWidthNs).toBe(alone.binWidthNs);
    }
    let kept: unknown;
    let alone: unknown;
    try {
      decayOf(c);
    } catch (e) {
      kept = e;
    }
    try {
      parseHistogramText(text, { source: 'f.csv', column: 'bad' });
    } catch (e) {
      alone = e;
    }
    expect(String(kept)).toMatch(/^InputError: f\.csv/);
    expect(String(kept)).toBe(String(alone));
  });
});
