import type { FitResult } from '../../shared/schema.js';
import { InputError } from '../errors.js';
import { alignIrfToDecay } from '../io/checkBinWidthsAgree.js';
import type { Histogram } from '../io/types.js';
import { addBootstrap } from './bootstrap.js';
import { fitModel, fitResolved } from './fitModel.js';
import { resolveFitSetup } from './fitSetup.js';
import type { FitOptions } from './options.js';
import { addProfileIntervals } from './profile.js';
import { selectComponents } from './selectComponents.js';

/**
 * Fits a decay: the public entry point. Checks the inputs (an InputError names the file and what is
 * wrong), then fits one model (`components` 1–4) or chooses the number of components (`'auto'`),
 * and adds profile-likelihood intervals (`profile`) and a parametric bootstrap (`bootstrap` > 0)
 * when asked. Inputs are never changed.
 */
export function fitDecay(decay: Histogram, irfIn: Histogram | null, options: FitOptions = {}): FitResult {
  const components = options.components ?? 1;
  if (components !== 'auto' && !(Number.isInteger(components) && components >= 1 && components <= 4))
    throw new InputError(`the number of components must be 1, 2, 3, 4 or auto, got ${components}`, {
      file: decay.source,
    });
  const measured = irfIn !== null && (options.irfMode ?? 'measured') === 'measured';
  const irf = measured ? alignIrfToDecay(decay, irfIn, options.resampleIrf ?? false) : irfIn;
  const bootstrap = options.bootstrap ?? 0;
  if (!(Number.isInteger(bootstrap) && bootstrap >= 0))
    throw new InputError(`the number of bootstrap replicates must be a whole number ≥ 0, got ${bootstrap}`, {
      file: decay.source,
    });
  if (options.seed !== undefined && !(Number.isInteger(options.seed) && options.seed >= 0))
    throw new InputError(`the seed must be a whole number ≥ 0, got ${options.seed}`, { file: decay.source });
  // Every other option is checked once here, before any fitting starts (the same checks run per fit);
  // a single model is then fitted on this very setup.
  const setup = resolveFitSetup(decay, irf, {
    ...options,
    components: components === 'auto' ? 1 : components,
  });

  let result =
    components === 'auto'
      ? selectComponents(decay, irf, options, fitModel)
      : fitResolved(setup, decay, options.curves ?? true);
  if (options.profile) result = addProfileIntervals(result, decay, irf, options, fitModel);
  if (bootstrap > 0) result = addBootstrap(result, decay, irf, options, fitModel);
  if (irf && irfIn && irf !== irfIn) {
    const added = irf.warnings.filter((w) => !irfIn.warnings.includes(w));
    result = { ...result, warnings: [...result.warnings, ...added] };
  }
  return result;
}
