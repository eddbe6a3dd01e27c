/** The importer's public surface: text in, histograms and spectra out. See FORMATS.md for the layouts. */
export {
  parseHistogramText,
  histogramCountsColumns,
  AXIS_TOLERANCE,
  type HistogramParseOptions,
} from './parseHistogram.js';
export { parseArrivalsText, MAX_ARRIVAL_CHANNELS, type ArrivalsParseOptions } from './parseArrivals.js';
export { parseSpectrumText, type SpectrumParseOptions } from './parseSpectrum.js';
export { splitSourceRef } from './sourceRef.js';
export { checkBinWidthsAgree, alignIrfToDecay } from './checkBinWidthsAgree.js';
export { resampleHistogram } from './resampleHistogram.js';
export { cropHistogram, type CropWindow } from './cropHistogram.js';
export { decodeText } from './decodeText.js';
export {
  metadataBinWidthNs,
  metadataPeriodNs,
  metadataCountRatePerS,
  metadataWavelengthNm,
  metadataNumber,
  summariseMetadata,
  type MetadataSummary,
} from './metadata.js';
export { MAX_COUNTS } from './validate.js';
export type { Histogram, Spectrum, SpectrumAxis, ImportReport, SpectrumImportReport } from './types.js';
