/**
 * What a batch records about a sample besides its fit: the files it read, the settings it ran with,
 * its provenance, and the result of a sample that failed. Apart from the fitting code, so that the
 * batch's main thread, which only records, does not load the fitter.
 */
import { SCHEMA_VERSION, type Provenance, type SampleResult } from '../../shared/schema.js';
import type { FileRef, SampleSettings } from './settings.js';

/** A file's text with the SHA-256 of its bytes, read by the caller. */
export interface InputFile {
  text: string;
  sha256: string;
}

/** The files of one sample, keyed by role; absent roles were not asked for. */
export interface SampleInputs {
  decay: InputFile;
  irf?: InputFile;
  absorption?: InputFile;
  emission?: InputFile;
}

export interface RunContext {
  lumirateVersion: string;
  /** ISO 8601 UTC time stamped on the results. */
  timeUtc: string;
}

export function refText(ref: FileRef): string {
  return ref.column === undefined ? ref.path : `${ref.path}#${ref.column}`;
}

/** The settings a result records: what the sample was run with, JSON-ready. */
export function settingsRecord(s: SampleSettings): Record<string, unknown> {
  return {
    decay: refText(s.decay),
    irf: s.irf ? refText(s.irf) : null,
    fit: s.fit,
    qy: s.qy,
    qyErr: s.qyErr,
    solvent: s.solvent,
    refractiveIndex: s.refractiveIndex,
    absorption: s.absorption ? refText(s.absorption) : null,
    emission: s.emission ? refText(s.emission) : null,
    group: s.group,
  };
}

/** Provenance of one sample: version, every input file with its hash, the settings, the time, the seed. */
export function provenanceOf(
  s: SampleSettings,
  hashes: { role: string; path: string; sha256: string }[],
  ctx: RunContext,
): Provenance {
  return {
    lumirateVersion: ctx.lumirateVersion,
    schemaVersion: SCHEMA_VERSION,
    inputs: hashes,
    settings: settingsRecord(s),
    timeUtc: ctx.timeUtc,
    seed: s.fit.seed ?? null,
  };
}

/** The file roles a sample reads, in a fixed order. */
export function sampleFileRefs(s: SampleSettings): { role: keyof SampleInputs; ref: FileRef }[] {
  const out: { role: keyof SampleInputs; ref: FileRef }[] = [{ role: 'decay', ref: s.decay }];
  if (s.irf) out.push({ role: 'irf', ref: s.irf });
  if (s.absorption) out.push({ role: 'absorption', ref: s.absorption });
  if (s.emission) out.push({ role: 'emission', ref: s.emission });
  return out;
}

export function inputHashes(s: SampleSettings, inputs: Partial<SampleInputs>): Provenance['inputs'] {
  return sampleFileRefs(s)
    .filter(({ role }) => inputs[role])
    .map(({ role, ref }) => ({ role, path: refText(ref), sha256: inputs[role]!.sha256 }));
}

/** The result of a sample that could not be run, with its error and whatever provenance is known. */
export function failedSample(
  base: { sample: string; manifestRow: number; metadata: Record<string, string>; group?: string | null },
  error: unknown,
  ctx: RunContext,
  settings?: SampleSettings,
  inputs?: Partial<SampleInputs>,
): SampleResult {
  const message = error instanceof Error ? error.message : String(error);
  const result: SampleResult = {
    schemaVersion: SCHEMA_VERSION,
    sample: base.sample,
    manifestRow: base.manifestRow,
    status: 'failed',
    error: message,
    metadata: base.metadata,
    warnings: [],
    provenance: settings
      ? provenanceOf(settings, inputHashes(settings, inputs ?? {}), ctx)
      : {
          lumirateVersion: ctx.lumirateVersion,
          schemaVersion: SCHEMA_VERSION,
          inputs: [],
          settings: {},
          timeUtc: ctx.timeUtc,
          seed: null,
        },
  };
  if (base.group) result.group = base.group;
  return result;
}
