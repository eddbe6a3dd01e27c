import { InputError } from '../errors.js';
import type { Histogram } from './types.js';
import { AXIS_TOLERANCE } from './parseHistogram.js';
import { resampleHistogram } from './resampleHistogram.js';
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

/**
 * The IRF on the decay's channel width: unchanged when the widths agree; rebinned (counts-conserving)
 * when they differ and `resample` is true; otherwise the InputError of checkBinWidthsAgree. The IRF's
 * shape is what reconvolution uses, so rebinning it costs no Poisson property the fit relies on.
 */
export function alignIrfToDecay(decay: Histogram, irf: Histogram, resample: boolean): Histogram {
  if (!resample || !relativeDiffers(decay.binWidthNs, irf.binWidthNs, AXIS_TOLERANCE)) {
    checkBinWidthsAgree(decay, irf);
    return irf;
  }
  const out = resampleHistogram(irf, decay.binWidthNs);
  return {
    ...out,
    warnings: [
      ...out.warnings,
      `the IRF ${irf.source} was resampled from ${formatNumber(irf.binWidthNs)} ns to the decay's ${formatNumber(decay.binWidthNs)} ns channels`,
    ],
  };
}
