import type { Statistic } from '../../shared/schema.js';
import { InputError, type InputLocation } from '../errors.js';
import type { FitOptions } from '../fit/options.js';
import { splitSourceRef } from '../io/sourceRef.js';
import type { Cell } from './csvCells.js';
import { firstJsonError, lineColumnAt } from './jsonPositions.js';
import { MANIFEST_COLUMNS, type ManifestColumn, type ManifestRow } from './manifest.js';

/** A file named in a manifest or settings file, as written there, split at the last '#'. */
export interface FileRef {
  /** Path as written (relative to the manifest). */
  path: string;
  /** Column name or 1-based index after '#', when given. */
  column?: string;
}

/** What a series analysis run by the batch should do (`series` in the settings file). */
export interface SeriesRequest {
  model: 'arrhenius' | 'stern-volmer' | 'fret' | 'efficiency';
  /** Metadata column holding x (e.g. temperature_k, quencher_m). */
  x: string;
  /** Only samples of this group; default: all ok samples with a numeric x. */
  group?: string;
  /** Förster radius, nm (fret). */
  r0Nm?: number;
  /** Unquenched lifetime, ns (stern-volmer, fret); default: the sample with x = 0. */
  tau0Ns?: number;
}

/** Batch defaults from the settings file; any manifest row may override the per-sample ones. */
export interface BatchSettings {
  /** Per-sample defaults, keyed like manifest columns (components, statistic, range, fix, qy, …). */
  defaults: Partial<Record<ManifestColumn, unknown>>;
  /** Fit options that have no manifest column. */
  fit: Pick<
    FitOptions,
    | 'irfMode'
    | 'resampleIrf'
    | 'scatter'
    | 'maxIterations'
    | 'allowNegativeAmplitudes'
    | 'bounds'
    | 'bootstrap'
    | 'profile'
  >;
  /** Seed for anything random. Default: 1. */
  seed: number;
  /** Series analyses to run after the batch. Default: none. */
  series: SeriesRequest[];
  /** Where each top-level key sits in the settings file, for messages. */
  locations: Record<string, InputLocation>;
}

/** Everything one sample needs, checked. Paths are as written in the manifest. */
export interface SampleSettings {
  sample: string;
  manifestRow: number;
  decay: FileRef;
  irf: FileRef | null;
  fit: FitOptions;
  qy: number | null;
  qyErr: number | null;
  solvent: string | null;
  refractiveIndex: number | null;
  absorption: FileRef | null;
  emission: FileRef | null;
  group: string | null;
  metadata: Record<string, string>;
}

export const EMPTY_SETTINGS: BatchSettings = { defaults: {}, fit: {}, seed: 1, series: [], locations: {} };

const FIT_KEYS: Record<string, keyof BatchSettings['fit']> = {
  irf_mode: 'irfMode',
  resample_irf: 'resampleIrf',
  scatter: 'scatter',
  max_iterations: 'maxIterations',
  allow_negative_amplitudes: 'allowNegativeAmplitudes',
  bounds: 'bounds',
  bootstrap: 'bootstrap',
  profile: 'profile',
};

const FIXABLE = /^(tau[1-4]Ns|shiftNs|background|scatter|irfFwhmNs)$/;

/** Removes `//` and `/* … *\/` comments outside strings, keeping line and column positions intact. */
export function stripJsonComments(text: string): string {
  let out = '';
  let i = 0;
  let inString = false;
  while (i < text.length) {
    const ch = text[i];
    if (inString) {
      out += ch;
      if (ch === '\\') {
        out += text[i + 1] ?? '';
        i += 2;
        continue;
      }
      if (ch === '"') inString = false;
      i++;
    } else if (ch === '"') {
      inString = true;
      out += ch;
      i++;
    } else if (ch === '/' && text[i + 1] === '/') {
      while (i < text.length && text[i] !== '\n') {
        out += ' ';
        i++;
      }
    } else if (ch === '/' && text[i + 1] === '*') {
      while (i < text.length && !(text[i] === '*' && text[i + 1] === '/')) {
        out += text[i] === '\n' ? '\n' : ' ';
        i++;
      }
      out += '  ';
      i += 2;
    } else {
      out += ch;
      i++;
    }
  }
  return out;
}

/**
 * Reads a settings file: JSON with `//` comments allowed (lumirate's template explains every key in
 * comments). Top-level keys: any manifest column except sample and decay as a per-sample default,
 * plus `irf_mode`, `resample_irf`, `scatter`, `max_iterations`, `allow_negative_amplitudes`, `bounds`, `bootstrap`,
 * `profile`, `seed` and `series`.
 */
export function parseSettings(text: string, options: { source: string }): BatchSettings {
  const source = options.source;
  const clean = stripJsonComments(text);
  const bad = firstJsonError(clean);
  if (bad)
    throw new InputError(`not valid JSON: ${bad.reason}`, {
      file: source,
      ...lineColumnAt(clean, bad.offset),
    });
  const raw: unknown = JSON.parse(clean);
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) {
    throw new InputError('the settings file must hold one JSON object { … }', { file: source, line: 1 });
  }
  const locations: Record<string, InputLocation> = {};
  for (const key of Object.keys(raw)) {
    const at = clean.indexOf(JSON.stringify(key));
    locations[key] = at >= 0 ? { file: source, ...lineColumnAt(clean, at) } : { file: source };
  }
  const settings: BatchSettings = { defaults: {}, fit: {}, seed: 1, series: [], locations };
  // Every manifest column but the two that only make sense per row.
  const known = new Set<string>(MANIFEST_COLUMNS.filter((c) => c !== 'sample' && c !== 'decay'));
  for (const [key, value] of Object.entries(raw as Record<string, unknown>)) {
    const where = locations[key];
    if (known.has(key)) {
      settings.defaults[key as ManifestColumn] = value;
      // Check defaults now, so a bad settings file fails before any sample runs.
      checkField(key as ManifestColumn, value, where);
    } else if (key in FIT_KEYS) {
      (settings.fit as Record<string, unknown>)[FIT_KEYS[key]] = checkFitKey(key, value, where);
    } else if (key === 'seed') {
      if (!Number.isInteger(value))
        throw new InputError(`'seed' must be an integer, not ${JSON.stringify(value)}`, where);
      settings.seed = value as number;
    } else if (key === 'series') {
      settings.series = checkSeries(value, where);
    } else if (key === 'sample' || key === 'decay') {
      throw new InputError(`'${key}' belongs in the manifest, one per row, not in the settings file`, where);
    } else if (!key.startsWith('//')) {
      throw new InputError(`unknown setting '${key}'`, where);
    }
  }
  return settings;
}

function checkFitKey(key: string, value: unknown, where: InputLocation): unknown {
  switch (key) {
    case 'irf_mode':
      if (value !== 'measured' && value !== 'gaussian' && value !== 'none') {
        throw new InputError(
          `'irf_mode' must be "measured", "gaussian" or "none", not ${JSON.stringify(value)}`,
          where,
        );
      }
      return value;
    case 'scatter':
    case 'resample_irf':
    case 'profile':
    case 'allow_negative_amplitudes':
      if (typeof value !== 'boolean')
        throw new InputError(`'${key}' must be true or false, not ${JSON.stringify(value)}`, where);
      return value;
    case 'max_iterations':
    case 'bootstrap':
      if (!Number.isInteger(value) || (value as number) < 0) {
        throw new InputError(`'${key}' must be a whole number ≥ 0, not ${JSON.stringify(value)}`, where);
      }
      return value;
    case 'bounds': {
      if (typeof value !== 'object' || value === null || Array.isArray(value)) {
        throw new InputError(`'bounds' must be an object like {"tau1Ns": {"min": 0.1, "max": 20}}`, where);
      }
      for (const [name, b] of Object.entries(value as Record<string, unknown>)) {
        if (!FIXABLE.test(name)) throw new InputError(`'bounds' names an unknown parameter '${name}'`, where);
        const bb = b as Record<string, unknown>;
        for (const side of ['min', 'max']) {
          if (bb?.[side] !== undefined && typeof bb[side] !== 'number') {
            throw new InputError(`'bounds.${name}.${side}' must be a number`, where);
          }
        }
      }
      return value;
    }
  }
  return value;
}

function checkSeries(value: unknown, where: InputLocation): SeriesRequest[] {
  if (!Array.isArray(value))
    throw new InputError(
      `'series' must be a list like [{"model": "arrhenius", "x": "temperature_k"}]`,
      where,
    );
  return value.map((item, k) => {
    const o = item as Record<string, unknown>;
    const models = ['arrhenius', 'stern-volmer', 'fret', 'efficiency'];
    if (typeof o !== 'object' || o === null || !models.includes(o.model as string)) {
      throw new InputError(`series[${k}].model must be one of ${models.join(', ')}`, where);
    }
    if (typeof o.x !== 'string' || o.x === '')
      throw new InputError(`series[${k}].x must name a manifest metadata column`, where);
    for (const f of ['r0_nm', 'tau0_ns']) {
      if (o[f] !== undefined && (typeof o[f] !== 'number' || !((o[f] as number) > 0))) {
        throw new InputError(`series[${k}].${f} must be a positive number`, where);
      }
    }
    if (o.group !== undefined && typeof o.group !== 'string')
      throw new InputError(`series[${k}].group must be a string`, where);
    const req: SeriesRequest = { model: o.model as SeriesRequest['model'], x: o.x };
    if (o.group !== undefined) req.group = o.group as string;
    if (o.r0_nm !== undefined) req.r0Nm = o.r0_nm as number;
    if (o.tau0_ns !== undefined) req.tau0Ns = o.tau0_ns as number;
    return req;
  });
}

/** Parses a number the way a manifest writes it: '.' as the decimal mark, optional exponent. */
function parseNumber(text: string, name: string, where: InputLocation): number {
  const t = text.trim();
  if (/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t)) return Number(t);
  if (/^[+-]?\d+,\d+$/.test(t)) {
    throw new InputError(
      `${name} '${t}' uses a decimal comma; write '${t.replace(',', '.')}' (manifest cells use '.')`,
      where,
    );
  }
  throw new InputError(`${name} '${t}' is not a number`, where);
}

function asText(value: unknown): string {
  return typeof value === 'string' ? value : JSON.stringify(value);
}

function numberField(value: unknown, name: string, where: InputLocation): number {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new InputError(`${name} must be a finite number`, where);
    return value;
  }
  if (typeof value !== 'string')
    throw new InputError(`${name} must be a number, not ${JSON.stringify(value)}`, where);
  return parseNumber(value, name, where);
}

/** Splits `file.csv#column` at the last '#' (the importer's rule); a reference must name a file. */
export function parseFileRef(text: string, name: string, where: InputLocation): FileRef {
  const t = text.trim();
  const ref = splitSourceRef(t);
  if (ref.path.trim() === '') throw new InputError(`${name} '${t}' names a column but no file`, where);
  return ref.column === undefined ? { path: ref.path.trim() } : { path: ref.path.trim(), column: ref.column };
}

/** Checks one field and returns its parsed form; `value` is a manifest cell (string) or a JSON value. */
function checkField(key: ManifestColumn, value: unknown, where: InputLocation): unknown {
  switch (key) {
    case 'decay':
    case 'irf':
    case 'absorption':
    case 'emission':
      if (typeof value !== 'string')
        throw new InputError(`${key} must be a file name, not ${JSON.stringify(value)}`, where);
      return parseFileRef(value, key, where);
    case 'components': {
      const t = asText(value).trim().toLowerCase();
      if (t === 'auto') return 'auto';
      if (!/^[1-4]$/.test(t))
        throw new InputError(`components '${asText(value)}' must be 1, 2, 3, 4 or auto`, where);
      return Number(t);
    }
    case 'statistic': {
      const t = asText(value).trim().toLowerCase();
      if (t !== 'poisson' && t !== 'neyman' && t !== 'pearson') {
        throw new InputError(`statistic '${asText(value)}' must be poisson, neyman or pearson`, where);
      }
      return t as Statistic;
    }
    case 'range': {
      let pair: [number, number];
      if (Array.isArray(value) && value.length === 2) {
        pair = [numberField(value[0], 'range start', where), numberField(value[1], 'range end', where)];
      } else if (typeof value === 'string' && value.includes(':')) {
        const [a, b] = value.split(':');
        pair = [parseNumber(a, 'range start', where), parseNumber(b, 'range end', where)];
      } else {
        throw new InputError(`range '${asText(value)}' must be START:END in ns, e.g. 1.2:45`, where);
      }
      if (!(pair[1] > pair[0]))
        throw new InputError(`range '${asText(value)}' must end after it starts`, where);
      return pair;
    }
    case 'fix': {
      const out: Record<string, number> = {};
      if (typeof value === 'object' && value !== null && !Array.isArray(value)) {
        for (const [k, v] of Object.entries(value)) out[k] = numberField(v, `fix ${k}`, where);
      } else if (typeof value === 'string') {
        for (const part of value.split(/[;\s]+/).filter(Boolean)) {
          const m = /^([A-Za-z0-9]+)\s*=\s*(.+)$/.exec(part);
          if (!m) throw new InputError(`fix '${part}' must be NAME=VALUE, e.g. tau1Ns=2.5;shiftNs=0`, where);
          out[m[1]] = parseNumber(m[2], `fix ${m[1]}`, where);
        }
      } else {
        throw new InputError(`fix must be NAME=VALUE pairs separated by ';'`, where);
      }
      for (const k of Object.keys(out)) {
        if (!FIXABLE.test(k)) {
          throw new InputError(
            `fix names an unknown parameter '${k}' (known: tau1Ns … tau4Ns, shiftNs, background, scatter, irfFwhmNs)`,
            where,
          );
        }
      }
      return out;
    }
    case 'qy':
    case 'qy_err': {
      const x = numberField(value, key, where);
      if (x < 0 || x > 1) throw new InputError(`${key} ${x} must lie between 0 and 1`, where);
      return x;
    }
    case 'refractive_index': {
      const x = numberField(value, key, where);
      if (!(x >= 1 && x < 5))
        throw new InputError(`refractive_index ${x} is not a plausible refractive index (1 … 5)`, where);
      return x;
    }
    case 'period_ns': {
      const x = numberField(value, key, where);
      if (!(x > 0)) throw new InputError(`period_ns ${x} must be positive`, where);
      return x;
    }
    case 'solvent':
    case 'group':
    case 'sample':
      return asText(value).trim();
  }
}

function isEmpty(value: unknown): boolean {
  return value === undefined || value === null || (typeof value === 'string' && value.trim() === '');
}

/**
 * The settings of one sample: the manifest row's non-empty cells over the settings file's defaults.
 * Throws InputError naming the manifest cell (or the settings key) that is wrong.
 */
export function resolveSampleSettings(
  row: ManifestRow,
  settings: BatchSettings,
  manifestSource: string,
): SampleSettings {
  const get = (key: ManifestColumn): unknown => {
    const cell: Cell | undefined = row.cells[key];
    if (cell && !isEmpty(cell.value)) {
      return checkField(key, cell.value, { file: manifestSource, line: cell.line, column: cell.column });
    }
    const d = settings.defaults[key];
    if (!isEmpty(d)) return checkField(key, d, settings.locations[key] ?? {});
    return undefined;
  };
  const decay = get('decay') as FileRef | undefined;
  if (!decay || decay.path === '') {
    const cell = row.cells.decay;
    throw new InputError(`sample '${row.sample}' has no decay file`, {
      file: manifestSource,
      line: cell?.line ?? row.line,
      column: cell?.column,
    });
  }
  const fit: FitOptions = { ...settings.fit, seed: settings.seed };
  const components = get('components');
  if (components !== undefined) fit.components = components as number | 'auto';
  const statistic = get('statistic');
  if (statistic !== undefined) fit.statistic = statistic as Statistic;
  const range = get('range');
  if (range !== undefined) fit.rangeNs = range as [number, number];
  const fix = get('fix');
  if (fix !== undefined) fit.fix = fix as Record<string, number>;
  const period = get('period_ns');
  if (period !== undefined) fit.periodNs = period as number;
  const qy = get('qy') as number | undefined;
  const qyErr = get('qy_err') as number | undefined;
  if (qyErr !== undefined && qy === undefined) {
    const cell = row.cells.qy_err;
    throw new InputError(`qy_err is given without qy`, {
      file: manifestSource,
      line: cell?.line ?? row.line,
      column: cell?.column,
    });
  }
  return {
    sample: row.sample,
    manifestRow: row.row,
    decay,
    irf: (get('irf') as FileRef | undefined) ?? null,
    fit,
    qy: qy ?? null,
    qyErr: qy === undefined ? null : (qyErr ?? 0),
    solvent: (get('solvent') as string | undefined) ?? null,
    refractiveIndex: (get('refractive_index') as number | undefined) ?? null,
    absorption: (get('absorption') as FileRef | undefined) ?? null,
    emission: (get('emission') as FileRef | undefined) ?? null,
    group: (get('group') as string | undefined) ?? null,
    metadata: { ...row.metadata },
  };
}

/** The settings template written by `lumirate batch --init`: every key, commented, with its default. */
export const SETTINGS_TEMPLATE = `// lumirate batch settings. JSON with // comments allowed.
// Every key is optional. Per-sample keys are defaults that any manifest row may override
// by filling the column of the same name; an empty manifest cell keeps the default.
{
  // Number of exponential components: 1, 2, 3, 4 or "auto" (chosen by the likelihood-ratio test).
  "components": 1,

  // Figure of merit: "poisson" (maximum likelihood), "neyman" or "pearson" (weighted least squares).
  "statistic": "poisson",

  // Fit range in ns on the decay's own time axis, "START:END". Default: chosen from the data.
  // "range": "1.0:45.0",

  // Parameters held fixed, NAME=VALUE separated by ';' (tau1Ns … tau4Ns, shiftNs, background,
  // scatter, irfFwhmNs).
  // "fix": "shiftNs=0",

  // Measured IRF file (relative to the manifest), optionally FILE#COLUMN. Without one the IRF is
  // modelled as a Gaussian.
  // "irf": "irf.csv",

  // Laser repetition period, ns; earlier pulses' tails are added to the model.
  // "period_ns": 12.5,

  // Fluorescence quantum yield and its standard error; with them the rates k_r and k_nr are reported.
  // "qy": 0.5,
  // "qy_err": 0.02,

  // Solvent name (its refractive index is looked up) or the refractive index itself, for Strickler–Berg.
  // "solvent": "ethanol",
  // "refractive_index": 1.361,

  // Absorption (molar absorption coefficient) and emission spectra for the Strickler–Berg estimate.
  // "absorption": "abs.csv",
  // "emission": "em.csv",

  // How the IRF enters: "measured", "gaussian" or "none" (tail fit).
  // "irf_mode": "measured",

  // Rebin an IRF recorded with another channel width onto the decay's channels (else: refused).
  "resample_irf": false,

  // Include a scatter term shaped like the IRF.
  "scatter": false,

  // Optimiser iteration limit.
  "max_iterations": 200,

  // Allow negative amplitudes (rise components).
  "allow_negative_amplitudes": false,

  // Bounds on parameters, e.g. {"tau1Ns": {"min": 0.05, "max": 50}}.
  // "bounds": {},

  // Parametric bootstrap replicates per sample (0 = none) and profile-likelihood intervals.
  "bootstrap": 0,
  "profile": false,

  // Seed for anything random.
  "seed": 1,

  // Series analyses run after the batch, on the samples' metadata columns.
  // model: "arrhenius" (x in K), "stern-volmer" (x in mol/L), "fret", "efficiency" (x in K).
  // Optional: "group", "r0_nm" (fret), "tau0_ns" (stern-volmer, fret).
  "series": []
}
`;
