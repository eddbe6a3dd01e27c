import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseArrivalsText } from '../../src/io/parseArrivals.js';
import { parseSpectrumText } from '../../src/io/parseSpectrum.js';
import type { Histogram, Spectrum } from '../../src/io/types.js';

// Property tests of the importer: whatever text arrives, it either returns a histogram that keeps
// the promises of its type or throws its own InputError, and nothing else. 10⁴+ inputs in total,
// seeded so a failure can be replayed.

/** The promises of `Histogram`: finite non-negative counts on a finite, strictly increasing axis. */
function keepsPromises(h: Histogram): boolean {
  if (h.counts.length !== h.timeNs.length || h.counts.length < 1) return false;
  if (!(Number.isFinite(h.binWidthNs) && h.binWidthNs > 0)) return false;
  for (let i = 0; i < h.counts.length; i++) {
    if (!(Number.isFinite(h.counts[i]) && h.counts[i] >= 0)) return false;
    if (!Number.isFinite(h.timeNs[i])) return false;
    if (i > 0 && !(h.timeNs[i] > h.timeNs[i - 1])) return false;
  }
  return true;
}

function spectrumKeepsPromises(s: Spectrum): boolean {
  if (s.x.length !== s.y.length || s.x.length < 2) return false;
  for (let i = 0; i < s.x.length; i++) {
    if (!(Number.isFinite(s.x[i]) && s.x[i] > 0 && Number.isFinite(s.y[i]))) return false;
    if (i > 0 && !(s.x[i] > s.x[i - 1])) return false;
  }
  return true;
}

/** Runs a parser; true when it accepted and the result keeps its promises or when it threw an InputError. */
function acceptsSoundlyOrRefuses<T>(parse: () => T, sound: (r: T) => boolean): boolean {
  let result: T;
  try {
    result = parse();
  } catch (err) {
    if (err instanceof InputError) return true;
    throw err;
  }
  return sound(result);
}

const SEPARATORS = [',', '\t', ';', ' ', '  '] as const;

/** A well-formed decay file with randomly chosen dressing, and the counts it holds. */
const validFile = fc
  .record({
    counts: fc.array(fc.nat({ max: 1_000_000 }), { minLength: 2, maxLength: 60 }),
    binPs: fc.integer({ min: 1, max: 100_000 }),
    t0: fc.integer({ min: 0, max: 1000 }),
    sep: fc.constantFrom(...SEPARATORS),
    unit: fc.constantFrom('ps', 'ns'),
    headerStyle: fc.constantFrom('time_%', 't_%', 'time (%)', 'time/%'),
    bom: fc.boolean(),
    crlf: fc.boolean(),
    meta: fc.boolean(),
    decimalComma: fc.boolean(),
  })
  .map((g) => {
    const nl = g.crlf ? '\r\n' : '\n';
    const comma = g.decimalComma && g.sep !== ',';
    const scale = g.unit === 'ps' ? 1 : 1e-3;
    const num = (x: number) => {
      const s = String(Number(x.toPrecision(12)));
      return comma ? s.replace('.', ',') : s;
    };
    // A header with a space needs a real separator, not whitespace.
    const header = g.sep.trim() === '' ? g.headerStyle.replace(' (', '(') : g.headerStyle;
    const lines: string[] = [];
    if (g.meta) lines.push('# sample: prop', `# excitation_nm: 405`);
    lines.push(`${header.replace('%', g.unit)}${g.sep}counts`);
    g.counts.forEach((c, i) => lines.push(`${num((g.t0 + i * g.binPs) * scale)}${g.sep}${c}`));
    return { text: (g.bom ? '\ufeff' : '') + lines.join(nl) + nl, counts: g.counts, binNs: g.binPs * 1e-3 };
  });

/** Ways to damage a file: truncation, stray characters, swapped separators, odd numbers, lost lines. */
const mutation = fc.oneof(
  fc.record({ kind: fc.constant('truncate' as const), at: fc.nat() }),
  fc.record({
    kind: fc.constant('insert' as const),
    at: fc.nat(),
    text: fc.oneof(
      fc.string({ maxLength: 4 }),
      fc.constantFrom(
        '\u0000',
        '\ufffd',
        '\u0007',
        '"',
        '#',
        ';',
        ',',
        '\t',
        '\r',
        '\n',
        '-',
        'e',
        '.',
        'NaN',
        '１',
      ),
    ),
  }),
  fc.record({
    kind: fc.constant('swap' as const),
    from: fc.constantFrom(...SEPARATORS),
    to: fc.constantFrom(...SEPARATORS, '|'),
  }),
  fc.record({
    kind: fc.constant('number' as const),
    at: fc.nat(),
    text: fc.oneof(
      fc.constantFrom(
        '1e15',
        '1e16',
        '1e308',
        '1e309',
        '-1',
        '-0',
        '1e-320',
        '0.5',
        'Infinity',
        '',
        ' ',
        '0x10',
        '1_000',
        '٣',
      ),
      fc.double().map(String),
    ),
  }),
  fc.record({ kind: fc.constant('dropLine' as const), at: fc.nat() }),
  fc.record({ kind: fc.constant('dupLine' as const), at: fc.nat() }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(text: string, m: Mutation): string {
  switch (m.kind) {
    case 'truncate':
      return text.slice(0, m.at % (text.length + 1));
    case 'insert': {
      const at = m.at % (text.length + 1);
      return text.slice(0, at) + m.text + text.slice(at);
    }
    case 'swap':
      return text.split(m.from).join(m.to);
    case 'number': {
      const cells = [...text.matchAll(/\d+(?:[.,]\d+)?/g)];
      if (cells.length === 0) return text;
      const c = cells[m.at % cells.length];
      return text.slice(0, c.index) + m.text + text.slice(c.index! + c[0].length);
    }
    case 'dropLine':
    case 'dupLine': {
      const lines = text.split('\n');
      const i = m.at % lines.length;
      if (m.kind === 'dropLine') lines.splice(i, 1);
      else lines.splice(i, 0, lines[i]);
      return lines.join('\n');
    }
  }
}

/** Options, mostly absent so that most damaged files get a fair chance of being read. */
const histogramOptions = fc.record({
  binWidthNs: fc.oneof(
    { arbitrary: fc.constant(undefined), weight: 6 },
    { arbitrary: fc.double({ min: 1e-6, max: 1e3, noNaN: true }), weight: 2 },
    { arbitrary: fc.constantFrom(0, -1, NaN, Infinity), weight: 1 },
  ),
  column: fc.oneof(
    { arbitrary: fc.constant(undefined), weight: 6 },
    { arbitrary: fc.constantFrom('counts', 'time_ns', 'x', '2', '0'), weight: 1 },
    { arbitrary: fc.integer({ min: -1, max: 4 }), weight: 1 },
  ),
});

describe('importer properties (seeded)', () => {
  it('reads every well-formed file back to its counts and bin width (2000 files)', () => {
    fc.assert(
      fc.property(validFile, ({ text, counts, binNs }) => {
        const h = parseHistogramText(text, { source: 'p.csv' });
        expect(Array.from(h.counts)).toEqual(counts);
        expect(Math.abs(h.binWidthNs - binNs)).toBeLessThanOrEqual(1e-9 * binNs);
        return keepsPromises(h);
      }),
      { seed: 42, numRuns: 2000 },
    );
  });

  it('either accepts a damaged file soundly or refuses it with an InputError (4000 files)', () => {
    fc.assert(
      fc.property(
        validFile,
        fc.array(mutation, { minLength: 1, maxLength: 3 }),
        histogramOptions,
        (file, ms, opts) => {
          const text = ms.reduce(mutate, file.text);
          return acceptsSoundlyOrRefuses(
            () => parseHistogramText(text, { source: 'p.csv', ...opts }),
            keepsPromises,
          );
        },
      ),
      { seed: 42, numRuns: 4000 },
    );
  });

  it('either accepts arbitrary text soundly or refuses it with an InputError (2500 inputs)', () => {
    const anyText = fc.oneof(
      fc.string({ maxLength: 200 }),
      fc.string({ unit: 'binary', maxLength: 200 }),
      fc.uint8Array({ maxLength: 200 }).map((b) => new TextDecoder().decode(b)),
      fc
        .array(
          fc.oneof(
            fc.double().map(String),
            fc.constantFrom(',', ';', '\t', ' ', '\n', '#', ':', 'time_ns', 'counts', 'channel'),
          ),
          { maxLength: 60 },
        )
        .map((a) => a.join('')),
    );
    fc.assert(
      fc.property(
        anyText,
        fc.option(fc.double({ min: 1e-4, max: 10, noNaN: true }), { nil: undefined }),
        (text, binWidthNs) =>
          acceptsSoundlyOrRefuses(
            () => parseHistogramText(text, { source: 'p.csv', binWidthNs }),
            keepsPromises,
          ),
      ),
      { seed: 42, numRuns: 2500 },
    );
  });

  it('arrival lists: accepts soundly or refuses with an InputError (1000 inputs)', () => {
    const arrivals = fc
      .array(fc.double({ min: 0, max: 5e4, noNaN: true }), { minLength: 1, maxLength: 80 })
      .map((ts) => `arrival_ps\n${ts.join('\n')}\n`);
    fc.assert(
      fc.property(
        arrivals,
        fc.array(mutation, { maxLength: 3 }),
        fc.double({ min: 1e-3, max: 5, noNaN: true }),
        fc.option(
          fc.tuple(
            fc.double({ min: -10, max: 10, noNaN: true }),
            fc.double({ min: -10, max: 60, noNaN: true }),
          ),
          { nil: undefined },
        ),
        (text, ms, binWidthNs, rangeNs) => {
          const t = ms.reduce(mutate, text);
          return acceptsSoundlyOrRefuses(
            () => parseArrivalsText(t, { source: 'a.txt', binWidthNs, rangeNs }),
            keepsPromises,
          );
        },
      ),
      { seed: 42, numRuns: 1000 },
    );
  });

  it('spectra: accepts soundly or refuses with an InputError (1000 inputs)', () => {
    const spectrum = fc
      .record({
        xs: fc.uniqueArray(fc.integer({ min: 200, max: 900 }), { minLength: 2, maxLength: 40 }),
        y: fc.double({ min: -10, max: 1e5, noNaN: true }),
        header: fc.constantFrom(
          'wavelength_nm,epsilon',
          'wavelength (nm),absorbance',
          'wavenumber_cm-1,photons',
          'wavelength_nm;counts',
        ),
      })
      .map(({ xs, y, header }) => {
        const sep = header.includes(';') ? ';' : ',';
        return `# concentration_M: 1e-5\n# path_length_cm: 1\n${header}\n${xs.map((x, i) => `${x}${sep}${y * (i + 1)}`).join('\n')}\n`;
      });
    fc.assert(
      fc.property(
        spectrum,
        fc.array(mutation, { maxLength: 3 }),
        fc.constantFrom('absorption' as const, 'emission' as const),
        (text, ms, kind) => {
          const t = ms.reduce(mutate, text);
          return acceptsSoundlyOrRefuses(
            () => parseSpectrumText(t, { source: 's.csv', kind }),
            spectrumKeepsPromises,
          );
        },
      ),
      { seed: 42, numRuns: 1000 },
    );
  });

  it('the soundness check itself rejects a histogram that breaks a promise (a check that cannot fail proves nothing)', () => {
    const good = parseHistogramText('time_ns,counts\n0,1\n1,2\n', { source: 'p.csv' });
    expect(keepsPromises(good)).toBe(true);
    expect(keepsPromises({ ...good, counts: Float64Array.from([1, -1]) })).toBe(false);
    expect(keepsPromises({ ...good, timeNs: Float64Array.from([1, 1]) })).toBe(false);
    expect(keepsPromises({ ...good, counts: Float64Array.from([1, NaN]) })).toBe(false);
    expect(() =>
      acceptsSoundlyOrRefuses(
        () => {
          throw new TypeError('boom');
        },
        () => true,
      ),
    ).toThrow(TypeError);
  });
});
