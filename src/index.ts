/**
 * lumirate's public library surface: everything a script needs to import, fit, turn lifetimes into
 * rates and run batches without the CLI. Text goes in, plain JSON-ready objects come out; nothing
 * here reads files or touches the process.
 */
export { InputError, ComputationError, LumirateError, type InputLocation } from './errors.js';

// Importer: text → Histogram, Spectrum; and the table writer for the same layouts.
export * from './io/index.js';
export { formatHistogramTable, formatSpectrumTable } from './io/writeTable.js';

// Photon-level simulator.
export {
  simulateTcspc,
  type SimulationOptions,
  type SimulatedMeasurement,
  type SimulationTruth,
} from './sim/simulateTcspc.js';
export { createRng, Rng } from './sim/rng.js';

// Fitter.
export type { FitOptions } from './fit/options.js';
export { fitDecay } from './fit/fitDecay.js';
export { fitModel } from './fit/fitModel.js';
export { fitGlobal, type GlobalMember, type GlobalFitResult } from './fit/fitGlobal.js';
export {
  durbinWatson,
  residualAutocorrelation,
  runsTest,
  informationCriteria,
  likelihoodRatioPValue,
} from './fit/diagnostics.js';

// Physics: rates, Strickler–Berg, conversions, quantum yield, constants.
export * from './physics/index.js';

// Batch: manifest, settings, per-sample pipeline, series laws, outputs, shards, merging.
export { parseManifest, MANIFEST_COLUMNS, type Manifest, type ManifestRow } from './batch/manifest.js';
export {
  parseSettings,
  resolveSampleSettings,
  SETTINGS_TEMPLATE,
  type BatchSettings,
} from './batch/settings.js';
export { runSample, runGroup } from './batch/runSample.js';
export { runSeries, fitArrhenius, type SeriesOptions } from './batch/series.js';
export { formatResultsCsv, formatSummaryMarkdown, formatErrorsLog } from './batch/outputs.js';
export { parseShard, shardOf } from './batch/shard.js';
export { mergeResults, parseResultsJson } from './batch/merge.js';

// Result schema (shared with the CLI and the viewer).
export * from '../shared/schema.js';
