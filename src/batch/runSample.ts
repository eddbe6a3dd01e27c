import { SCHEMA_VERSION, type GlobalGroupResult, type SampleResult } from '../../shared/schema.js';
import { InputError } from '../errors.js';
import { fitDecay } from '../fit/fitDecay.js';
import { fitGlobal } from '../fit/fitGlobal.js';
import type { FitOptions } from '../fit/options.js';
import { alignIrfToDecay } from '../io/checkBinWidthsAgree.js';
import { histogramFromTable, parseHistogramText } from '../io/parseHistogram.js';
import { readTextTable, type TextTable } from '../io/textTable.js';
import { parseSpectrumText } from '../io/parseSpectrum.js';
import type { Histogram } from '../io/types.js';
import { ratesFromFit } from '../physics/rates.js';
import { refractiveIndexOf } from '../physics/standards.js';
import { stricklerBerg } from '../physics/stricklerBerg.js';
import type { FitResult } from '../../shared/schema.js';
import {
  inputHashes,
  provenanceOf,
  refText,
  type InputFile,
  type RunContext,
  type SampleInputs,
} from './sampleRecord.js';
import type { FileRef, SampleSettings } from './settings.js';

export {
  failedSample,
  provenanceOf,
  sampleFileRefs,
  settingsRecord,
  type InputFile,
  type RunContext,
  type SampleInputs,
} from './sampleRecord.js';

/** Parsed histograms by `path#column`, kept by a caller that runs many samples sharing one IRF file. */
export type HistogramCache = Map<string, Histogram>;

function parseHistogramCached(file: InputFile, ref: FileRef, cache: HistogramCache | undefined): Histogram {
  const key = `${refText(ref)}\u0000${file.sha256}`;
  const hit = cache?.get(key);
  if (hit) return hit;
  const h = parseHistogramText(file.text, { source: refText(ref), column: ref.column });
  cache?.set(key, h);
  return h;
}

/** Tables of multi-decay files read last in this thread (see `decayHistogram`); a handful at most. */
const recentTables = new Map<string, TextTable>();
const TABLES_KEPT = 4;

/**
 * The decay of a sample, read as the command line reads `file#column`: messages name the file, and
 * a file with several counts columns gives the histogram the name `file#column`. A manifest usually
 * takes one column each of a multi-decay file in consecutive rows; the file's table is read once and
 * kept (by path and content hash) for the next columns, instead of being read again for each.
 */
function decayHistogram(file: InputFile, ref: FileRef): Histogram {
  const source = ref.path;
  if (ref.column === undefined) return parseHistogramText(file.text, { source });
  const key = `${ref.path}\u0000${file.sha256}`;
  let table = recentTables.get(key);
  if (!table) {
    table = readTextTable(file.text, source);
    recentTables.set(key, table);
    if (recentTables.size > TABLES_KEPT) recentTables.delete(recentTables.keys().next().value as string);
  }
  return histogramFromTable(table, { source, column: ref.column });
}

/** Reads the decay and IRF of a sample and checks that their channels agree. */
export function sampleHistograms(
  s: SampleSettings,
  inputs: SampleInputs,
  cache?: HistogramCache,
): { decay: Histogram; irf: Histogram | null } {
  const decay = decayHistogram(inputs.decay, s.decay);
  let irf: Histogram | null = null;
  if (s.irf) {
    if (!inputs.irf) throw new InputError(`the IRF file of sample '${s.sample}' was not read`);
    irf = alignIrfToDecay(decay, parseHistogramCached(inputs.irf, s.irf, cache), s.fit.resampleIrf ?? false);
  }
  return { decay, irf };
}

/** Adds rates (with a quantum yield) and the Strickler–Berg comparison (with both spectra) to a fit. */
function physicsOf(
  s: SampleSettings,
  inputs: SampleInputs,
  fit: FitResult,
): Pick<SampleResult, 'rates' | 'sb'> & { warnings: string[] } {
  const out: Pick<SampleResult, 'rates' | 'sb'> & { warnings: string[] } = { warnings: [] };
  if (s.qy !== null) out.rates = ratesFromFit(fit, { qy: s.qy, qyErr: s.qyErr ?? 0 });
  if (s.absorption || s.emission) {
    if (!s.absorption || !s.emission) {
      out.warnings.push(
        `Strickler–Berg needs both spectra; only the ${s.absorption ? 'absorption' : 'emission'} was given`,
      );
      return out;
    }
    const n = s.refractiveIndex ?? (s.solvent ? refractiveIndexOf(s.solvent) : null);
    if (n === null) {
      out.warnings.push('Strickler–Berg needs a refractive index: give refractive_index or solvent');
      return out;
    }
    const absorption = parseSpectrumText(inputs.absorption!.text, {
      source: refText(s.absorption),
      kind: 'absorption',
      column: s.absorption.column,
    });
    const emission = parseSpectrumText(inputs.emission!.text, {
      source: refText(s.emission),
      kind: 'emission',
      column: s.emission.column,
    });
    const tauNs =
      out.rates?.tauNs ?? (fit.components.length === 1 ? fit.components[0].tauNs : fit.tauAmpAvgNs);
    out.sb = stricklerBerg({ absorption, emission, refractiveIndex: n, qy: s.qy ?? undefined, tauNs });
  }
  return out;
}

function assemble(
  s: SampleSettings,
  inputs: SampleInputs,
  fit: FitResult,
  ctx: RunContext,
  global?: GlobalGroupResult,
): SampleResult {
  const physics = physicsOf(s, inputs, fit);
  const result: SampleResult = {
    schemaVersion: SCHEMA_VERSION,
    sample: s.sample,
    manifestRow: s.manifestRow,
    status: 'ok',
    metadata: s.metadata,
    fit,
    warnings: physics.warnings,
    provenance: provenanceOf(s, inputHashes(s, inputs), ctx),
  };
  if (s.group) result.group = s.group;
  if (global) result.global = global;
  if (physics.rates) result.rates = physics.rates;
  if (physics.sb) result.sb = physics.sb;
  return result;
}

/**
 * Runs one sample: parse its files, fit the decay, then rates and Strickler–Berg when their inputs are
 * there. Pure: the caller reads the files and hashes them. Throws on a sample that cannot be fitted;
 * `failedSample` turns that into a reported result.
 */
export function runSample(
  s: SampleSettings,
  inputs: SampleInputs,
  ctx: RunContext,
  cache?: HistogramCache,
): SampleResult {
  const { decay, irf } = sampleHistograms(s, inputs, cache);
  const fit = fitDecay(decay, irf, s.fit);
  return assemble(s, inputs, fit, ctx);
}

/** The fit options a group shares; members must agree on everything but the fit range and fixes. */
export function groupFitOptions(members: SampleSettings[]): FitOptions & { components: number } {
  const first = members[0];
  const components = first.fit.components ?? 1;
  if (components === 'auto') {
    throw new InputError(
      `group '${first.group}': linked lifetimes need a fixed number of components, not auto`,
    );
  }
  for (const m of members) {
    for (const key of ['components', 'statistic', 'periodNs', 'irfMode', 'scatter'] as const) {
      if (JSON.stringify(m.fit[key]) !== JSON.stringify(first.fit[key])) {
        throw new InputError(
          `group '${first.group}': sample '${m.sample}' has ${key} ${JSON.stringify(m.fit[key])} but '${first.sample}' has ${JSON.stringify(first.fit[key])}; members of a group are fitted together and must agree`,
        );
      }
    }
  }
  return { ...first.fit, components };
}

/**
 * Runs a group of samples with linked lifetimes (one global fit by variable projection); each member
 * gets its own fit object (its amplitudes, shift, background and statistics) and the group's result.
 * The whole group fails together: a member that cannot be read makes the linked fit meaningless.
 */
export function runGroup(
  members: { settings: SampleSettings; inputs: SampleInputs }[],
  ctx: RunContext,
  cache?: HistogramCache,
): SampleResult[] {
  const options = groupFitOptions(members.map((m) => m.settings));
  const data = members.map((m) => ({
    sample: m.settings.sample,
    ...sampleHistograms(m.settings, m.inputs, cache),
  }));
  const { global, members: fits } = fitGlobal(data, options, {
    group: members[0].settings.group ?? undefined,
  });
  return members.map((m, k) => assemble(m.settings, m.inputs, fits[k], ctx, global));
}
