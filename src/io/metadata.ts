import { InputError } from '../errors.js';
import { NS_PER } from '../../shared/units.js';
import { parseTimeUnit } from './columnNames.js';

/**
 * Reading numbers out of `# key: value` metadata. Keys arrive normalised (lower case, spaces → `_`).
 * A key may carry its unit (`bin_width_ps: 12.2`) or its value may (`bin_width: 12.2 ps`); a key
 * without a unit and a value without one is refused rather than guessed.
 */

/** ns per unit, for every spelling `parseTimeUnit` knows. */
const NS_PER_WORD: Record<string, number> = Object.fromEntries(
  ['fs', 'ps', 'ns', 'us', 'µs', 'μs', 'ms', 's'].map((w) => [w, NS_PER[parseTimeUnit(w)!]]),
);
const RATE_HZ: Record<string, number> = { hz: 1, khz: 1e3, mhz: 1e6, ghz: 1e9 };

const BIN_WIDTH_STEMS = [
  'bin_width',
  'binwidth',
  'bin_size',
  'channel_width',
  'time_per_channel',
  'resolution',
  'time_resolution',
  'tac_resolution',
];
const PERIOD_STEMS = ['period', 'rep_period', 'repetition_period', 'pulse_period', 'sync_period'];
const RATE_STEMS = [
  'rep_rate',
  'repetition_rate',
  'pulse_rate',
  'sync_rate',
  'laser_rate',
  'repetition_frequency',
];

/** Where the metadata came from, so that a bad value can be pointed at. */
export interface MetadataContext {
  source?: string;
  lines?: Record<string, number>;
}

interface Found {
  key: string;
  ns: number;
}

function splitNumberUnit(value: string): { num: string; unit: string } {
  const m = /^\s*([+-]?(?:\d+[.,]?\d*|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([A-Za-zµμ]*)\s*$/.exec(value);
  if (!m) return { num: value.trim(), unit: '' };
  return { num: m[1].replace(',', '.'), unit: m[2].toLowerCase().replace('μ', 'µ') };
}

function bad(key: string, value: string, ctx: MetadataContext, what: string): InputError {
  return new InputError(`metadata '${key}: ${value}' is not ${what}`, {
    file: ctx.source,
    line: ctx.lines?.[key],
  });
}

function positive(key: string, value: string, num: string, ctx: MetadataContext, what: string): number {
  const v = Number(num);
  if (num === '' || !Number.isFinite(v) || v <= 0) throw bad(key, value, ctx, what);
  return v;
}

/**
 * Keys `<stem>_<unit>` with a plain number, or `<stem>` with the unit in the value (`12.2 ps`).
 * `units` maps each unit word to its factor; the value times the factor is returned.
 */
function findScaled(
  meta: Record<string, string>,
  stems: string[],
  units: Record<string, number>,
  ctx: MetadataContext,
  example: string,
  /** Skip, rather than refuse, a bare `<stem>` key whose value carries no known unit (free text). */
  lenientBare = false,
): { key: string; scaled: number }[] {
  const out: { key: string; scaled: number }[] = [];
  for (const [key, value] of Object.entries(meta)) {
    for (const stem of stems) {
      const parsed = splitNumberUnit(value);
      let unit: string;
      if (key === stem) {
        unit = parsed.unit;
        if (!(unit in units)) {
          if (lenientBare) continue;
          throw bad(key, value, ctx, `a value with a unit (for example "${example}")`);
        }
      } else if (key.startsWith(`${stem}_`) && key.slice(stem.length + 1) in units) {
        unit = key.slice(stem.length + 1);
        if (parsed.unit !== '') throw bad(key, value, ctx, `a plain number of ${unit}`);
      } else continue;
      out.push({ key, scaled: positive(key, value, parsed.num, ctx, 'a positive number') * units[unit] });
    }
  }
  return out;
}

function findTimes(meta: Record<string, string>, stems: string[], ctx: MetadataContext): Found[] {
  return findScaled(meta, stems, NS_PER_WORD, ctx, '12.2 ps').map(({ key, scaled }) => ({ key, ns: scaled }));
}

/** Repetition rates, returned as periods (1/rate). */
function findRatesAsPeriods(meta: Record<string, string>, ctx: MetadataContext): Found[] {
  return findScaled(meta, RATE_STEMS, RATE_HZ, ctx, '80 MHz').map(({ key, scaled }) => ({
    key,
    ns: 1e9 / scaled,
  }));
}

function agreed(
  found: Found[],
  what: string,
  meta: Record<string, string>,
  ctx: MetadataContext,
): Found | undefined {
  if (found.length === 0) return undefined;
  const first = found[0];
  for (const f of found.slice(1)) {
    if (Math.abs(f.ns - first.ns) > 1e-3 * first.ns) {
      throw new InputError(
        `metadata disagrees on the ${what}: '${first.key}: ${meta[first.key]}' (${first.ns} ns) and '${f.key}: ${meta[f.key]}' (${f.ns} ns); keep one`,
        { file: ctx.source, line: ctx.lines?.[f.key] },
      );
    }
  }
  return first;
}

/**
 * Channel width in ns from metadata (`bin_width_ns`, `bin_width_ps`, `resolution_ps`,
 * `channel_width_ns`, `bin_width: 12.2 ps` …), or undefined when none is given. Throws InputError
 * when a value is not a positive number or two keys disagree by more than 0.1 %.
 */
export function metadataBinWidthNs(
  meta: Record<string, string>,
  ctx: MetadataContext = {},
): number | undefined {
  return findMetadataBinWidth(meta, ctx)?.ns;
}

/** As `metadataBinWidthNs`, also naming the key the value came from. */
export function findMetadataBinWidth(
  meta: Record<string, string>,
  ctx: MetadataContext = {},
): { key: string; ns: number } | undefined {
  return agreed(findTimes(meta, BIN_WIDTH_STEMS, ctx), 'bin width', meta, ctx);
}

/**
 * Excitation period in ns from metadata: a period (`period_ns`, `rep_period_us` …) or a repetition
 * rate (`rep_rate_mhz`, `repetition_rate_hz`, `rep_rate: 80 MHz` …; period = 1/rate). Undefined when
 * none is given; InputError when a value is not a positive number or two keys disagree.
 */
export function metadataPeriodNs(
  meta: Record<string, string>,
  ctx: MetadataContext = {},
): number | undefined {
  const found = [...findTimes(meta, PERIOD_STEMS, ctx), ...findRatesAsPeriods(meta, ctx)];
  return agreed(found, 'excitation period', meta, ctx)?.ns;
}

/**
 * A plain number from metadata (`excitation_nm`, `count_rate_per_s`, `concentration_m` …), or
 * undefined when the key is absent. Accepts a decimal comma. InputError when it is not a finite number.
 */
export function metadataNumber(
  meta: Record<string, string>,
  key: string,
  ctx: MetadataContext = {},
): number | undefined {
  if (!(key in meta)) return undefined;
  const value = meta[key];
  const { num, unit } = splitNumberUnit(value);
  const v = Number(num);
  if (num === '' || unit !== '' || !Number.isFinite(v)) throw bad(key, value, ctx, 'a plain number');
  return v;
}

/** Counts per second in each spelling of a count-rate unit. */
const COUNT_RATE_PER_S: Record<string, number> = {
  per_s: 1,
  cps: 1,
  hz: 1,
  's-1': 1,
  kcps: 1e3,
  khz: 1e3,
  mcps: 1e6,
  mhz: 1e6,
};
const COUNT_RATE_STEMS = ['count_rate', 'detector_count_rate', 'detector_rate', 'detection_rate', 'cfd_rate'];

/**
 * Detector count rate in counts per second (`count_rate_per_s`, `count_rate_kcps`,
 * `detector_count_rate: 25 kcps` …), or undefined. Used to judge pile-up against the excitation rate.
 */
export function metadataCountRatePerS(
  meta: Record<string, string>,
  ctx: MetadataContext = {},
): number | undefined {
  const found = findScaled(meta, COUNT_RATE_STEMS, COUNT_RATE_PER_S, ctx, '25 kcps', true).map(
    ({ key, scaled }) => ({
      key,
      ns: scaled,
    }),
  );
  return agreed(found, 'count rate', meta, ctx)?.ns;
}

const NM: Record<string, number> = { nm: 1 };
const WAVELENGTH_STEMS: Record<'excitation' | 'emission', string[]> = {
  excitation: ['excitation', 'excitation_wavelength', 'ex', 'lambda_ex', 'exc'],
  emission: ['emission', 'emission_wavelength', 'em', 'lambda_em', 'detection_wavelength'],
};

/** Excitation or emission (detection) wavelength in nm (`excitation_nm: 405`, `emission: 520 nm` …), or undefined. */
export function metadataWavelengthNm(
  meta: Record<string, string>,
  which: 'excitation' | 'emission',
  ctx: MetadataContext = {},
): number | undefined {
  const found = findScaled(meta, WAVELENGTH_STEMS[which], NM, ctx, '405 nm', true).map(({ key, scaled }) => ({
    key,
    ns: scaled,
  }));
  return agreed(found, `${which} wavelength`, meta, ctx)?.ns;
}

/** The metadata lumirate understands, read and checked in one go; absent keys are null. */
export interface MetadataSummary {
  sample: string | null;
  binWidthNs: number | null;
  periodNs: number | null;
  countRatePerS: number | null;
  excitationNm: number | null;
  emissionNm: number | null;
}

export function summariseMetadata(meta: Record<string, string>, ctx: MetadataContext = {}): MetadataSummary {
  const sampleKey = ['sample', 'sample_name', 'name'].find((k) => meta[k] !== undefined);
  return {
    sample: sampleKey ? meta[sampleKey] : null,
    binWidthNs: metadataBinWidthNs(meta, ctx) ?? null,
    periodNs: metadataPeriodNs(meta, ctx) ?? null,
    countRatePerS: metadataCountRatePerS(meta, ctx) ?? null,
    excitationNm: metadataWavelengthNm(meta, 'excitation', ctx) ?? null,
    emissionNm: metadataWavelengthNm(meta, 'emission', ctx) ?? null,
  };
}
