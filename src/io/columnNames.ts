import type { TimeUnit } from '../../shared/units.js';

/**
 * What a header name says about its column. Units are read from the name itself in any of the
 * usual spellings: `time_ns`, `t_ps`, `time (ps)`, `time [ns]`, `time/ns`, `time in ns`.
 */

const UNIT_WORDS: Record<string, TimeUnit> = {
  fs: 'fs',
  ps: 'ps',
  ns: 'ns',
  us: 'us',
  µs: 'us',
  μs: 'us',
  ms: 'ms',
  s: 's',
};

const TIME_STEMS = [
  'time',
  't',
  'delay',
  'tau_axis',
  'arrival',
  'arrival_time',
  'arrivaltime',
  'dtime',
  'microtime',
];
const CHANNEL_NAMES = ['channel', 'channels', 'chan', 'ch', 'bin', 'index', 'channel_index', 'tac_channel'];

/** Splits `name_unit`, `name (unit)`, `name [unit]`, `name/unit`, `name in unit` into its parts. */
export function splitNameUnit(header: string): { stem: string; unit: string | null } {
  const h = header.trim().toLowerCase();
  const m =
    /^(.*?)\s*[([]\s*([^)\]]+?)\s*[)\]]$/.exec(h) ??
    /^(.*?)\s*\/\s*(\S+)$/.exec(h) ??
    /^(.*?)\s+in\s+(\S+)$/.exec(h) ??
    /^(.*?)_([a-zµμ][a-z0-9µμ^⁻¹-]*)$/.exec(h);
  if (m && m[1] !== '') return { stem: m[1].trim().replace(/\s+/g, '_'), unit: m[2] };
  return { stem: h.replace(/\s+/g, '_'), unit: null };
}

export type TimeColumnKind =
  | { kind: 'time'; unit: TimeUnit }
  | { kind: 'channel' }
  /** Named like a time column but without a usable unit. */
  | { kind: 'time-without-unit'; unitText: string | null }
  | null;

/** Classifies a header name as a time axis (with its unit), a channel index, or neither (null). */
export function classifyTimeColumn(header: string): TimeColumnKind {
  const lower = header.trim().toLowerCase();
  if (CHANNEL_NAMES.includes(lower.replace(/\s+/g, '_'))) return { kind: 'channel' };
  if (lower in UNIT_WORDS) return { kind: 'time', unit: UNIT_WORDS[lower] };
  const { stem, unit } = splitNameUnit(header);
  if (!TIME_STEMS.includes(stem)) {
    return TIME_STEMS.includes(lower.replace(/\s+/g, '_'))
      ? { kind: 'time-without-unit', unitText: null }
      : null;
  }
  if (unit !== null && unit in UNIT_WORDS) return { kind: 'time', unit: UNIT_WORDS[unit] };
  return { kind: 'time-without-unit', unitText: unit };
}

/** Parses a time unit word (`ps`, `ns`, `µs` …), or null. */
export function parseTimeUnit(word: string): TimeUnit | null {
  return UNIT_WORDS[word.trim().toLowerCase()] ?? null;
}
