/**
 * The cards beside the plots: fit parameters with their uncertainties and diagnostics, rates and the
 * Strickler–Berg comparison, and where the sample came from.
 */
import {
  SERIES_COUNT_PARAMETERS,
  type FitResult,
  type SampleResult,
  type SeriesResult,
} from '../shared/schema.js';
import { formatNumber, formatValueError } from '../shared/format.js';
import { el } from './dom.js';
import { warningsOf } from './table.js';
import { displayName, splitUnit } from './names.js';

type Row = [label: string, value: string, hint?: string];

function definitionList(rows: Row[]): HTMLElement {
  const dl = el('dl', { className: 'lr-values' });
  for (const [label, value, hint] of rows) {
    if (value === '') continue;
    dl.appendChild(el('dt', hint ? { title: hint } : null, label));
    dl.appendChild(el('dd', null, value));
  }
  return dl;
}

function list(className: string, items: string[]): HTMLElement | null {
  if (items.length === 0) return null;
  return el('ul', { className }, ...items.map((w) => el('li', null, w)));
}

function card(title: string, ...children: (Node | null)[]): HTMLElement {
  return el('section', { className: 'lr-card' }, el('h3', null, title), ...children);
}

const ve = (v: number, e: number | undefined, unit = '') => formatValueError(v, e) + (unit ? ` ${unit}` : '');
const n = (v: number | null | undefined, digits = 4) =>
  v === null || v === undefined || !Number.isFinite(v) ? '' : formatNumber(v, { digits });

function componentTable(fit: FitResult): HTMLElement {
  const hasProfile = fit.components.some((c) => c.tauProfileNs);
  const hasBoot = fit.components.some((c) => c.tauBootstrapCi95Ns);
  const head = el(
    'tr',
    null,
    el('th', { attrs: { scope: 'col' } }, '#'),
    el('th', { attrs: { scope: 'col' } }, 'τ (ns)'),
    el('th', { attrs: { scope: 'col' }, title: 'Fraction of the total amplitude aᵢ/Σa' }, 'a fraction'),
    el(
      'th',
      { attrs: { scope: 'col' }, title: 'Fraction of the steady-state intensity aᵢτᵢ/Σaτ' },
      'intensity fraction',
    ),
    hasProfile ? el('th', { attrs: { scope: 'col' } }, 'τ 68 % profile (ns)') : null,
    hasBoot ? el('th', { attrs: { scope: 'col' } }, 'τ 95 % bootstrap (ns)') : null,
  );
  const body = el('tbody');
  fit.components.forEach((c, i) => {
    body.appendChild(
      el(
        'tr',
        null,
        el('td', null, String(i + 1)),
        el(
          'td',
          { className: 'lr-tau' },
          c.fixed ? `${n(c.tauNs)} (fixed)` : formatValueError(c.tauNs, c.tauErrNs),
        ),
        el('td', null, n(c.amplitudeFraction, 3)),
        el('td', null, formatValueError(c.intensityFraction, c.intensityFractionErr)),
        hasProfile
          ? el('td', null, c.tauProfileNs ? `${n(c.tauProfileNs[0])} – ${n(c.tauProfileNs[1])}` : '')
          : null,
        hasBoot
          ? el(
              'td',
              null,
              c.tauBootstrapCi95Ns ? `${n(c.tauBootstrapCi95Ns[0])} – ${n(c.tauBootstrapCi95Ns[1])}` : '',
            )
          : null,
      ),
    );
  });
  return el('table', { className: 'lr-components' }, el('thead', null, head), body);
}

/**
 * Correlation coefficients of the free parameters, from the covariance the fit stored. Strong
 * correlations (|r| ≥ 0.9, a common rule of thumb) are marked with a sign as well as shading.
 */
function correlationTable(cov: NonNullable<FitResult['covariance']>): HTMLElement | null {
  const { names, matrix } = cov;
  if (names.length < 2 || matrix.length !== names.length) return null;
  const sd = names.map((_, i) => Math.sqrt(matrix[i][i]));
  const head = el('tr', null, el('th'), ...names.map((nm) => el('th', { attrs: { scope: 'col' } }, nm)));
  const body = el('tbody');
  names.forEach((rowName, i) => {
    const tr = el('tr', null, el('th', { attrs: { scope: 'row' } }, rowName));
    names.forEach((_, j) => {
      if (j > i) {
        tr.appendChild(el('td'));
        return;
      }
      const r = matrix[i][j] / (sd[i] * sd[j]);
      const strong = i !== j && Math.abs(r) >= 0.9;
      tr.appendChild(
        el(
          'td',
          strong ? { className: 'lr-strong', title: 'strongly correlated' } : null,
          Number.isFinite(r) ? `${r.toFixed(2)}${strong ? ' !' : ''}` : '–',
        ),
      );
    });
    body.appendChild(tr);
  });
  return el(
    'details',
    { className: 'lr-correlation' },
    el('summary', null, 'Parameter correlations'),
    el('table', null, el('thead', null, head), body),
  );
}

/** The fit card: lifetimes, averages, nuisance parameters, goodness of fit and warnings. */
export function fitCard(s: SampleResult): HTMLElement {
  if (s.status === 'failed' || !s.fit) {
    return card(
      'Fit',
      el(
        'p',
        { className: 'lr-error', attrs: { role: 'alert' } },
        `This sample failed: ${s.error ?? 'no reason recorded'}`,
      ),
      list('lr-warnings', s.warnings ?? []),
    );
  }
  const f = s.fit;
  const single = f.components.length === 1;
  const headline = single
    ? `τ = ${ve(f.components[0].tauNs, f.components[0].tauErrNs, 'ns')}`
    : `⟨τ⟩amp = ${ve(f.tauAmpAvgNs, f.tauAmpAvgErrNs, 'ns')}`;
  const rows: Row[] = [
    ['⟨τ⟩ amplitude-weighted', single ? '' : ve(f.tauAmpAvgNs, f.tauAmpAvgErrNs, 'ns'), 'Σaτ/Σa'],
    ['⟨τ⟩ intensity-weighted', single ? '' : ve(f.tauIntAvgNs, f.tauIntAvgErrNs, 'ns'), 'Σaτ²/Σaτ'],
    ['IRF shift', ve(f.shiftNs, f.shiftErrNs, 'ns'), 'Positive: the decay arrives later than the IRF'],
    ['Background', ve(f.background, f.backgroundErr, 'counts/channel')],
    ['Scatter', ve(f.scatter, f.scatterErr), 'IRF-shaped term, fraction of the counts in the fit range'],
    ['IRF FWHM', f.irfFwhmNs !== undefined ? ve(f.irfFwhmNs, f.irfFwhmErrNs, 'ns') : ''],
    ['IRF centre', f.irfCenterNs !== undefined ? ve(f.irfCenterNs, f.irfCenterErrNs, 'ns') : ''],
    ['χ²ᵣ (Pearson)', n(f.chi2Reduced), `χ² = ${n(f.chi2)} over ${f.dof} degrees of freedom`],
    ['Poisson deviance / dof', n(f.deviancePerDof)],
    ['Durbin–Watson', n(f.durbinWatson, 3)],
    ['Runs test', `z = ${n(f.runsZ, 3)}, p = ${n(f.runsPValue, 3)}`, 'Wald–Wolfowitz runs of residual signs'],
    ['Degrees of freedom', String(f.dof)],
    ['AIC / BIC', `${n(f.aic, 6)} / ${n(f.bic, 6)}`],
    ['Statistic', f.statistic],
    ['IRF', f.irfMode],
    ['Fit range', `${n(f.rangeNs[0])} – ${n(f.rangeNs[1])} ns`],
    ['Channel width', `${n(f.binWidthNs)} ns`],
    ['Repetition period', f.periodNs !== null ? `${n(f.periodNs)} ns` : ''],
    ['Peak / total counts', `${n(f.peakCounts, 6)} / ${n(f.totalCounts, 6)}`],
    ['Stopped', `${f.stop} after ${f.iterations} iterations${f.converged ? '' : ' (not converged)'}`],
    [
      'Held fixed',
      Object.entries(f.fixed ?? {})
        .map(([k, v]) => `${k} = ${n(v)}`)
        .join(', '),
    ],
  ];
  const selection = f.componentSelection
    ? el(
        'p',
        { className: 'lr-note' },
        `Components chosen: ${f.componentSelection.chosen}. ${f.componentSelection.reason}`,
      )
    : null;
  const global = s.global
    ? el(
        'p',
        { className: 'lr-note' },
        `Linked with group "${s.global.group}" (${s.global.members.length} members): ` +
          s.global.components.map((c, i) => `τ${i + 1} = ${ve(c.tauNs, c.tauErrNs, 'ns')}`).join(', ') +
          `, χ²ᵣ = ${n(s.global.chi2Reduced)}`,
      )
    : null;
  return card(
    'Fit',
    el('p', { className: 'lr-headline' }, headline),
    componentTable(f),
    definitionList(rows),
    selection,
    global,
    f.covariance ? correlationTable(f.covariance) : null,
    list('lr-warnings', warningsOf(s)),
  );
}

/** Rates from Φ and τ, and the Strickler–Berg prediction; null when the sample has neither. */
export function ratesCard(s: SampleResult): HTMLElement | null {
  const r = s.rates;
  const sb = s.sb;
  if (!r && !sb) return null;
  const rows: Row[] = [];
  if (r) {
    const basis = {
      single: 'single lifetime',
      amplitudeWeighted: 'amplitude-weighted ⟨τ⟩',
      perComponent: 'per component',
    }[r.tauBasis];
    rows.push(
      ['Φ', ve(r.qy, r.qyErr), 'Fluorescence quantum yield'],
      ['τ used', `${ve(r.tauNs, r.tauErrNs, 'ns')} (${basis})`],
      ['k_r = Φ/τ', ve(r.krPerS, r.krErrPerS, 's⁻¹')],
      ['k_nr = (1 − Φ)/τ', ve(r.knrPerS, r.knrErrPerS, 's⁻¹')],
      ['τ₀ = 1/k_r', ve(r.tau0Ns, r.tau0ErrNs, 'ns'), 'Natural radiative lifetime'],
    );
    for (const [i, c] of (r.perComponent ?? []).entries())
      rows.push([`k_nr, component ${i + 1}`, `${ve(c.knrPerS, c.knrErrPerS, 's⁻¹')} (τ = ${n(c.tauNs)} ns)`]);
  }
  if (sb) {
    rows.push(
      ['k_r, Strickler–Berg', `${n(sb.krSbPerS)} s⁻¹`],
      ['τ₀, Strickler–Berg', `${n(sb.tau0SbNs)} ns`],
      ['k_r / k_r,SB', n(sb.krRatio), 'Measured radiative rate over the prediction'],
      ['Φ predicted', n(sb.qySb, 3), 'k_r,SB · τ'],
      ['⟨ν̃f⁻³⟩^(−1/3)', `${n(sb.emissionMeanWavenumberCm, 5)} cm⁻¹`],
      ['∫ε d ln ν̃', `${n(sb.integratedEpsLnNu)} L mol⁻¹ cm⁻¹`],
      ['Oscillator strength', n(sb.oscillatorStrength, 3)],
      ['Transition dipole', `${n(sb.dipoleDebye, 3)} D`],
      ['Refractive index', n(sb.refractiveIndex, 5)],
      ['Absorption band', `${n(sb.bandCm[0], 5)} – ${n(sb.bandCm[1], 5)} cm⁻¹ (${sb.bandChoice})`],
      ['Emission spectrum read as', sb.emissionAssumption],
    );
  }
  return card(
    'Rates and Strickler–Berg',
    definitionList(rows),
    list('lr-notes-list', [...(r?.notes ?? []), ...(sb?.note ? [sb.note] : []), ...(sb?.notes ?? [])]),
    list('lr-warnings', [...(r?.warnings ?? []), ...(sb?.warnings ?? [])]),
  );
}

/** Manifest metadata and provenance. */
export function sourceCard(s: SampleResult): HTMLElement {
  const meta: Row[] = Object.entries(s.metadata ?? {}).map(([k, v]) => [k, v]);
  if (s.group) meta.unshift(['group', s.group]);
  const p = s.provenance;
  const inputs = (p?.inputs ?? []).map((i) => `${i.role}: ${i.path} (sha256 ${i.sha256.slice(0, 12)}…)`);
  return card(
    'Sample and source',
    definitionList(meta),
    list('lr-inputs', inputs),
    p
      ? el(
          'p',
          { className: 'lr-note' },
          `lumirate ${p.lumirateVersion}, ${p.timeUtc}${p.seed !== null ? `, seed ${p.seed}` : ''}`,
        )
      : null,
  );
}

/** "eaEv" with "eaErrEv" (or "eaEvErr") → ["Eₐ (eV)", "0.250 ± 0.010"]. */
export function seriesParameterRows(parameters: Record<string, number>): [string, string][] {
  const rows: [string, string][] = [];
  for (const key of Object.keys(parameters)) {
    // Per-sample entries are named head_sample ("rNm_dye-3", with its error "rErrNm_dye-3").
    const cut = key.indexOf('_');
    const head = cut < 0 ? key : key.slice(0, cut);
    const tail = cut < 0 ? '' : key.slice(cut);
    const { base, suffix } = splitUnit(head);
    if (/Err$/.test(base)) continue;
    const errKey = [`${base}Err${suffix}${tail}`, `${head}Err${tail}`].find((k) => k in parameters);
    const value = SERIES_COUNT_PARAMETERS.has(key)
      ? String(parameters[key])
      : errKey
        ? formatValueError(parameters[key], parameters[errKey])
        : formatNumber(parameters[key]);
    rows.push([cut < 0 ? displayName(key) : `${displayName(head)}, ${key.slice(cut + 1)}`, value]);
  }
  return rows;
}

export function seriesCard(series: SeriesResult): HTMLElement {
  const rows: Row[] = seriesParameterRows(series.parameters).map(([k, v]) => [k, v]);
  if (series.chi2Reduced !== null) rows.push(['χ²ᵣ', n(series.chi2Reduced)]);
  rows.push(['Degrees of freedom', String(series.dof)], ['Points', String(series.points.length)]);
  return el(
    'div',
    { className: 'lr-card lr-series-card' },
    definitionList(rows),
    list('lr-notes-list', series.notes),
    list('lr-warnings', series.warnings),
  );
}
