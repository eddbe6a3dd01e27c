import { InputError } from '../errors.js';
import type { Histogram } from './types.js';
import { AXIS_TOLERANCE } from './parseHistogram.js';
import { formatNumber, relativeDiffers } from './validate.js';

/**
 * Throws an InputError naming both sources and widths when a decay and its IRF have bin widths that
 * differ by more than 0.1 %: reconvolution needs them on the same channel grid.
 */
export function checkBinWidthsAgree(decay: Histogram, irf: Histogram): void {
  if (relativeDiffers(decay.binWidthNs, irf.binWidthNs, AXIS_TOLERANCE)) {
    throw new InputError(
      `the decay ${decay.source} has ${formatNumber(decay.binWidthNs)} ns channels but the IRF ${irf.source} has ${formatNumber(irf.binWidthNs)} ns; record both with the same bin width or ask for resampling`,
      { file: decay.source },
    );
  }
}
