/**
 * Unit names and converters shared by the core, the CLI and the viewer. Inside lumirate time is in ns,
 * wavelength in nm, wavenumber in cm⁻¹, rates in s⁻¹.
 */

export type TimeUnit = 'fs' | 'ps' | 'ns' | 'us' | 'ms' | 's';

/** How many ns one of each time unit is. */
export const NS_PER: Readonly<Record<TimeUnit, number>> = {
  fs: 1e-6,
  ps: 1e-3,
  ns: 1,
  us: 1e3,
  ms: 1e6,
  s: 1e9,
};

export function toNs(value: number, unit: TimeUnit): number {
  return value * NS_PER[unit];
}

/** Wavelength in nm ↔ wavenumber in cm⁻¹ (1e7 nm per cm). The map is its own inverse. */
export function nmToWavenumberCm(nm: number): number {
  return 1e7 / nm;
}
export function wavenumberCmToNm(wavenumberCm: number): number {
  return 1e7 / wavenumberCm;
}

/** Rate in s⁻¹ → lifetime in ns. */
export function rateToNs(ratePerS: number): number {
  return 1e9 / ratePerS;
}
/** Lifetime in ns → rate in s⁻¹. */
export function nsToRate(tauNs: number): number {
  return 1e9 / tauNs;
}
