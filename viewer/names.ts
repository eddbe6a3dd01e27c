/**
 * Display names for the field and column names in results: the unit that ends a field name
 * (`eaEv`, `knrPerS`) or a manifest column (`temperature_k`) becomes a unit in parentheses, and the
 * usual symbols of the trade replace the short names.
 */

/** Unit suffixes of field names (house convention: the unit ends the field name). */
const UNIT_SUFFIXES: [string, string][] = [
  ['PerMPerS', 'M⁻¹ s⁻¹'],
  ['KjPerMol', 'kJ/mol'],
  ['PerM', 'M⁻¹'],
  ['PerS', 's⁻¹'],
  ['Ns', 'ns'],
  ['Ev', 'eV'],
  ['Nm', 'nm'],
  ['Cm', 'cm⁻¹'],
  ['K', 'K'],
];

/** Unit suffixes of manifest columns: `temperature_k`, `quencher_m`. */
const COLUMN_SUFFIXES: [RegExp, string][] = [
  [/_k$/i, 'K'],
  [/_c$/i, '°C'],
  [/_m$/i, 'M'],
  [/_mm$/i, 'mM'],
  [/_um$/i, 'µM'],
  [/_nm$/i, 'nm'],
  [/_ns$/i, 'ns'],
];

/** Usual symbols; other names are shown as they are. */
const SYMBOLS: Record<string, string> = {
  ea: 'Eₐ',
  k0: 'k₀',
  a: 'A',
  ksv: 'K_SV',
  kq: 'k_q',
  tau0: 'τ₀',
  tauD: 'τ_D',
  tauPlateau: 'τ plateau',
  r0: 'R₀',
  kr: 'k_r',
  knr: 'k_nr',
  decayRate: '1/τ',
  tau0OverTau: 'τ₀/τ',
  fretEfficiency: 'E (transfer efficiency)',
  efficiency: 'η = τ/τ plateau',
  temperature: 'T',
  plateauSamples: 'samples in the plateau',
};

export function splitUnit(name: string): { base: string; unit: string; suffix: string } {
  for (const [suffix, unit] of UNIT_SUFFIXES) {
    if (
      name.endsWith(suffix) &&
      name.length > suffix.length &&
      /[a-z0-9]$/.test(name.slice(0, -suffix.length))
    )
      return { base: name.slice(0, -suffix.length), unit, suffix };
  }
  return { base: name, unit: '', suffix: '' };
}

/** "knrPerS" → "k_nr (s⁻¹)", "temperature_k" → "T (K)", "eaEv" → "Eₐ (eV)". */
export function displayName(name: string): string {
  for (const [re, unit] of COLUMN_SUFFIXES) {
    if (re.test(name)) {
      const base = name.replace(re, '');
      return `${SYMBOLS[base] ?? base.replace(/_/g, ' ')} (${unit})`;
    }
  }
  const { base, unit } = splitUnit(name);
  const symbol = SYMBOLS[base] ?? base;
  return unit ? `${symbol} (${unit})` : symbol;
}
