/**
 * Generates lumirate's demo data: an invented lab's measurements of three invented emitters (QX-1,
 * QX-2, QX-3). Every decay is drawn photon by photon by the simulator from a truth set here; the
 * spectra are sums of Gaussian bands designed here. Nothing is a real measurement. Deterministic:
 * fixed seeds, so running it again rewrites identical files.
 *
 *   npx tsx sample-data/generate.ts
 *
 * Writes decays/, irf/, spectra/, bad/, manifest.csv, manifest-with-bad-rows.csv and truth.json
 * beside this script. See README.md for the scenario.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { format, resolveConfig } from 'prettier';
import { dirname, join } from 'node:path';
import { simulateTcspc, type GaussianIrfSpec } from '../src/sim/simulateTcspc.js';
import { createRng } from '../src/sim/rng.js';
import { formatHistogramTable, formatSpectrumTable } from '../src/io/writeTable.js';
import { stricklerBerg } from '../src/physics/stricklerBerg.js';
import type { Spectrum } from '../src/io/types.js';

const here = import.meta.dirname;

function write(rel: string, text: string): void {
  const path = join(here, rel);
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, text);
}

// ---------------------------------------------------------------------------------------------
// Instrument: a 405 nm picosecond diode laser, 20 MHz (50 ns period) or 80 MHz (12.5 ns period).

const BIN_WIDTH_NS = 0.0122;
const SETTINGS = {
  '20MHz': { periodNs: 50, channels: 4096, irfFile: 'irf/irf-20MHz.csv', centerNs: 2.0, seed: 2001 },
  '80MHz': { periodNs: 12.5, channels: 1024, irfFile: 'irf/irf-80MHz.csv', centerNs: 1.2, seed: 8001 },
} as const;
type Setting = keyof typeof SETTINGS;

/** The true instrument response: Gaussian with a short exponential tail (detector diffusion). */
function irfSpec(setting: Setting): GaussianIrfSpec {
  return {
    kind: 'gaussian',
    fwhmNs: 0.18,
    centerNs: SETTINGS[setting].centerNs,
    tailNs: 0.35,
    tailFraction: 0.08,
  };
}

// ---------------------------------------------------------------------------------------------
// Solvents: n_D at 20 °C (CRC Handbook; values as listed in the project's reference table).

const N_D = { ethanol: 1.3611, cyclohexane: 1.4262, toluene: 1.4961, acetonitrile: 1.3442 } as const;
type Solvent = keyof typeof N_D;

// ---------------------------------------------------------------------------------------------
// Spectra: vibronic progressions of Gaussian bands on the wavenumber axis.

interface Band {
  /** 0–0 transition, cm⁻¹. */
  nu00: number;
  /** Vibronic spacing, cm⁻¹, and Huang–Rhys factor (Poisson weights of the progression). */
  spacing: number;
  huangRhys: number;
  /** Gaussian standard deviation of each vibronic line, cm⁻¹. */
  sigma: number;
}

interface EmitterDesign {
  code: string;
  /** Lowest absorption band; its emission mirror image is shifted down by `stokesCm`. */
  s1: Band;
  /** A higher, stronger transition (fixed); only the lowest band is scaled to the chosen rate. */
  higherBand: { nu: number; sigma: number; epsMax: number };
  stokesCm: number;
  /** Emission from another state: a broad Gaussian instead of the mirror image. */
  otherStateEmission?: { nu: number; sigma: number };
  /** Solvatochromic shifts of absorption and emission, cm⁻¹. */
  shifts: Partial<Record<Solvent, { abs: number; em: number }>>;
}

function progression(nu: number, b: Band, sign: 1 | -1, origin: number): number {
  let y = 0;
  let weight = Math.exp(-b.huangRhys);
  for (let v = 0; v < 8; v++) {
    const center = origin + sign * v * b.spacing;
    y += weight * Math.exp(-0.5 * ((nu - center) / b.sigma) ** 2);
    weight *= b.huangRhys / (v + 1);
  }
  return y;
}

const ABS_NM = Float64Array.from({ length: 451 }, (_, i) => 250 + i); // 250–700 nm, 1 nm
const EM_NM = Float64Array.from({ length: 451 }, (_, i) => 380 + i); // 380–830 nm, 1 nm

/** ε on the nm grid (no Jacobian: ε is not a density), lowest band scaled by `s1Scale`. */
function absorption(d: EmitterDesign, solvent: Solvent, s1Scale: number): Float64Array {
  const shift = d.shifts[solvent]?.abs ?? 0;
  return ABS_NM.map((nm) => {
    const nu = 1e7 / nm;
    const s1 = s1Scale * progression(nu, d.s1, 1, d.s1.nu00 + shift);
    const hb = d.higherBand;
    return s1 + hb.epsMax * Math.exp(-0.5 * ((nu - (hb.nu + shift)) / hb.sigma) ** 2);
  });
}

/** Photons per nm: the per-wavenumber photon spectrum times the Jacobian 1e7/λ², peak scaled to 1e5. */
function emission(d: EmitterDesign, solvent: Solvent): Float64Array {
  const shift = d.shifts[solvent]?.em ?? 0;
  const y = EM_NM.map((nm) => {
    const nu = 1e7 / nm;
    const perNu = d.otherStateEmission
      ? Math.exp(-0.5 * ((nu - (d.otherStateEmission.nu + shift)) / d.otherStateEmission.sigma) ** 2)
      : progression(nu, d.s1, -1, d.s1.nu00 - d.stokesCm + shift);
    return (perNu * 1e7) / (nm * nm);
  });
  const max = Math.max(...y);
  return y.map((v) => (1e5 * v) / max);
}

function spectrum(kind: 'absorption' | 'emission', x: Float64Array, y: Float64Array): Spectrum {
  return {
    kind,
    axis: 'nm',
    x,
    y,
    ...(kind === 'emission' ? { emissionOrdinate: 'photonsPerAxisUnit' as const } : {}),
    metadata: {},
    source: 'design',
    warnings: [],
  };
}

/**
 * Band of the lowest transition for the Strickler–Berg integral: from the red end of the data to the
 * minimum of ε between the lowest band and the higher one (noise-free design spectrum).
 */
function s1BandCm(d: EmitterDesign, solvent: Solvent): [number, number] {
  const eps = absorption(d, solvent, 1);
  const shift = d.shifts[solvent]?.abs ?? 0;
  let best = -1;
  for (let i = 0; i < ABS_NM.length; i++) {
    const nu = 1e7 / ABS_NM[i];
    if (nu <= d.s1.nu00 + shift || nu >= d.higherBand.nu + shift) continue;
    if (best < 0 || eps[i] < eps[best]) best = i;
  }
  return [1e7 / ABS_NM[ABS_NM.length - 1], 1e7 / ABS_NM[best]];
}

function sbRate(d: EmitterDesign, solvent: Solvent, s1Scale: number): number {
  return stricklerBerg({
    absorption: spectrum('absorption', ABS_NM, absorption(d, solvent, s1Scale)),
    emission: spectrum('emission', EM_NM, emission(d, solvent)),
    refractiveIndex: N_D[solvent],
    bandCm: s1BandCm(d, solvent),
  }).krSbPerS;
}

const EMITTERS: Record<'QX-1' | 'QX-2' | 'QX-3', EmitterDesign> = {
  // A rigid blue emitter: structured absorption near 400 nm, mirror-image emission.
  'QX-1': {
    code: 'QX-1',
    s1: { nu00: 24300, spacing: 1380, huangRhys: 0.85, sigma: 520 },
    higherBand: { nu: 36500, sigma: 1500, epsMax: 42000 },
    stokesCm: 350,
    shifts: {
      cyclohexane: { abs: 250, em: 300 },
      toluene: { abs: -150, em: -200 },
      ethanol: { abs: 0, em: 0 },
    },
  },
  // A green emitter: lowest band near 460 nm, still absorbing at 405 nm.
  'QX-2': {
    code: 'QX-2',
    s1: { nu00: 21400, spacing: 1300, huangRhys: 0.7, sigma: 560 },
    higherBand: { nu: 33000, sigma: 1600, epsMax: 30000 },
    stokesCm: 450,
    shifts: {
      ethanol: { abs: 0, em: 0 },
      toluene: { abs: -200, em: -150 },
      acetonitrile: { abs: 80, em: -120 },
    },
  },
  // Absorbs strongly near 410 nm but emits broadly and far to the red from another (charge-transfer)
  // state: Strickler–Berg, which assumes the absorbing state emits, overestimates k_r about 4-fold.
  'QX-3': {
    code: 'QX-3',
    s1: { nu00: 23800, spacing: 1350, huangRhys: 0.9, sigma: 600 },
    higherBand: { nu: 36000, sigma: 1600, epsMax: 38000 },
    stokesCm: 0,
    otherStateEmission: { nu: 17200, sigma: 1500 },
    shifts: {
      cyclohexane: { abs: 200, em: 900 },
      toluene: { abs: -100, em: 300 },
      acetonitrile: { abs: 50, em: -900 },
    },
  },
};

// Chosen Strickler–Berg rates in ethanol (or the first solvent) set the scale of each lowest band; the
// true k_r then follows from the agreement factor and n² (Strickler–Berg scales with n²).
const KR_TRUE_REF = { 'QX-1': 1.0e8, 'QX-2': 1.6e8 } as const;
const SB_OVER_TRUE = { 'QX-1': 1.06, 'QX-2': 1.09, 'QX-3': 4.0 } as const;
const QX3_EPS_MAX = 36000;

/** Scale of the lowest band: linear in the ε scale, so one evaluation at scale 1 suffices (plus the higher band's leak). */
function s1ScaleFor(code: keyof typeof EMITTERS): number {
  const d = EMITTERS[code];
  if (code === 'QX-3') {
    const peak = Math.max(
      ...Array.from({ length: 200 }, (_, i) => progression(d.s1.nu00 - 500 + i * 20, d.s1, 1, d.s1.nu00)),
    );
    return QX3_EPS_MAX / peak;
  }
  const ref: Solvent = 'ethanol';
  const target = KR_TRUE_REF[code] * SB_OVER_TRUE[code];
  const leak = sbRate(d, ref, 0);
  const unit = sbRate(d, ref, 1) - leak;
  return (target - leak) / unit;
}

// ---------------------------------------------------------------------------------------------
// Samples.

interface SampleTruth {
  sample: string;
  emitter: string;
  solvent: Solvent;
  setting: Setting;
  /** Decay components: lifetimes and amplitude fractions. */
  components: { tauNs: number; amplitudeFraction: number }[];
  krPerS: number;
  knrPerS: number[];
  qyTrue: number;
  qy: number;
  qyErr: number;
  krSbPerS: number;
  colorShiftNs: number;
  backgroundPerChannel: number;
  peakCounts: number;
  seed: number;
  decayRef: string;
  absorption: string;
  emission: string;
  group?: string;
  /** Shares of the excited species, when they differ from the amplitudes seen in the detection band. */
  populationFractions?: number[];
  temperatureK?: number;
  quencherM?: number;
  fitComponents: number;
}

const R_GAS = 8.31446261815; // J mol⁻¹ K⁻¹ (CODATA 2018, exact product N_A·k_B)

const truths: SampleTruth[] = [];
const qyRng = createRng(4242);
const sbCache = new Map<string, number>();
const scales = { 'QX-1': s1ScaleFor('QX-1'), 'QX-2': s1ScaleFor('QX-2'), 'QX-3': s1ScaleFor('QX-3') };

function spectraFiles(
  code: keyof typeof EMITTERS,
  solvent: Solvent,
): { absorption: string; emission: string; sb: number } {
  const stem = `spectra/${code.toLowerCase().replace('-', '')}-${solvent}`;
  const key = `${code}/${solvent}`;
  if (!sbCache.has(key)) {
    const d = EMITTERS[code];
    const rng = createRng(9000 + sbCache.size);
    const eps = absorption(d, solvent, scales[code]);
    const em = emission(d, solvent);
    sbCache.set(key, sbRate(d, solvent, scales[code]));
    // A little instrument noise, so the spectra look measured: ±20 L mol⁻¹ cm⁻¹ on ε; shot noise
    // (√counts) plus a dark-count spread of ±5 on the emission.
    const epsNoisy = eps.map((v) => Math.round(v + 20 * rng.normal()));
    const emNoisy = em.map((v) => Math.round(v + Math.sqrt(v) * rng.normal() + 5 * rng.normal()));
    const common = { emitter: d.code, solvent, invented: 'yes, demo data' };
    write(
      `${stem}-absorption.csv`,
      formatSpectrumTable('wavelength_nm', ABS_NM, 'epsilon', epsNoisy, {
        ...common,
        ordinate_unit: 'L mol-1 cm-1',
      }),
    );
    write(
      `${stem}-emission.csv`,
      formatSpectrumTable('wavelength_nm', EM_NM, 'photons', emNoisy, {
        ...common,
        excitation_nm: '405',
        ordinate: 'photons',
        corrected: 'yes',
      }),
    );
  }
  return { absorption: `${stem}-absorption.csv`, emission: `${stem}-emission.csv`, sb: sbCache.get(key)! };
}

function krOf(code: keyof typeof EMITTERS, solvent: Solvent): number {
  return spectraFiles(code, solvent).sb / SB_OVER_TRUE[code];
}

let seedCounter = 100;
function addSample(
  t: Omit<SampleTruth, 'qy' | 'qyErr' | 'seed' | 'qyTrue' | 'krSbPerS' | 'absorption' | 'emission'>,
): void {
  const code = t.emitter as keyof typeof EMITTERS;
  const files = spectraFiles(code, t.solvent);
  // Φ = k_r·⟨τ⟩_a over the excited-state populations (equal to τ for one component). The amplitudes seen
  // in one detection band also weight each species' emission spectrum, so for the two-band sample the
  // populations are given separately.
  const weights = t.populationFractions ?? t.components.map((c) => c.amplitudeFraction);
  const tauAmp = t.components.reduce((s, c, i) => s + weights[i] * c.tauNs, 0);
  const qyTrue = (t.krPerS * tauAmp) / 1e9;
  const qy = Math.round(1000 * (qyTrue + 0.01 * qyRng.normal())) / 1000;
  truths.push({
    ...t,
    qyTrue,
    qy,
    qyErr: 0.02,
    krSbPerS: files.sb,
    absorption: files.absorption,
    emission: files.emission,
    seed: seedCounter++,
  });
}

function mono(krPerS: number, knrPerS: number) {
  return {
    components: [{ tauNs: 1e9 / (krPerS + knrPerS), amplitudeFraction: 1 }],
    krPerS,
    knrPerS: [knrPerS],
  };
}

// QX-1: k_nr in ethanol from the Arrhenius law (worked values: k_r = 1e8, k0 = 1e7, A = 1e13 s⁻¹,
// Ea = 30 kJ/mol). QX-2: in acetonitrile τ0 = 4 ns exactly, the start of the quencher titration.
const ARR = { k0: 1e7, a: 1e13, eaJPerMol: 30_000 };
const knrArrhenius = (tK: number) => ARR.k0 + ARR.a * Math.exp(-ARR.eaJPerMol / (R_GAS * tK));
const TAU0_QX2_MECN_NS = 4;
const KQ_PER_M_PER_S = 1e10;

/** True k_r: the chosen value in ethanol for QX-1 and QX-2, otherwise Strickler–Berg ÷ the agreement factor. */
function kr(code: keyof typeof EMITTERS, solvent: Solvent): number {
  if (solvent === 'ethanol' && (code === 'QX-1' || code === 'QX-2')) return KR_TRUE_REF[code];
  return krOf(code, solvent);
}
const knr2Mecn = 1e9 / TAU0_QX2_MECN_NS - kr('QX-2', 'acetonitrile');

/** A single-exponential sample; the decay file is named after the sample unless `decayRef` says otherwise. */
function monoSample(
  sample: string,
  code: keyof typeof EMITTERS,
  solvent: Solvent,
  knrPerS: number,
  colorShiftNs: number,
  backgroundPerChannel: number,
  extra: Partial<SampleTruth> = {},
): void {
  addSample({
    sample,
    emitter: code,
    solvent,
    setting: '20MHz',
    ...mono(kr(code, solvent), knrPerS),
    fitComponents: 1,
    colorShiftNs,
    backgroundPerChannel,
    peakCounts: 10000,
    decayRef: `decays/${sample}.csv`,
    ...extra,
  });
}

monoSample('qx1-cyclohexane', 'QX-1', 'cyclohexane', 2.0e7, 0.03, 3);
monoSample('qx1-toluene', 'QX-1', 'toluene', 6.0e7, 0.035, 3);
monoSample('qx1-ethanol', 'QX-1', 'ethanol', knrArrhenius(293.15), 0.03, 2, { temperatureK: 293.15 });
monoSample('qx2-ethanol', 'QX-2', 'ethanol', 1.4e8, 0.045, 2);
monoSample('qx2-toluene', 'QX-2', 'toluene', 0.6e8, 0.05, 4);
monoSample('qx2-acetonitrile', 'QX-2', 'acetonitrile', knr2Mecn, 0.045, 2);
// QX-3: long-lived in cyclohexane; two conformers (bi-exponential) in toluene, detected in two bands.
monoSample('qx3-cyclohexane', 'QX-3', 'cyclohexane', 2.0e7, 0.06, 3);
monoSample('qx3-acetonitrile', 'QX-3', 'acetonitrile', 1.6e8, 0.06, 2);
const QX3_TOLUENE_TAUS_NS = [1.4, 9.0];
const QX3_TOLUENE_POPULATIONS = [0.4, 0.6];
for (const [band, fractions, shift] of [
  ['em520', [0.55, 0.45], 0.05],
  ['em600', [0.25, 0.75], 0.065],
] as const) {
  const kr3 = kr('QX-3', 'toluene');
  addSample({
    sample: `qx3-toluene-${band}`,
    emitter: 'QX-3',
    solvent: 'toluene',
    setting: '20MHz',
    components: QX3_TOLUENE_TAUS_NS.map((tauNs, i) => ({ tauNs, amplitudeFraction: fractions[i] })),
    krPerS: kr3,
    knrPerS: QX3_TOLUENE_TAUS_NS.map((tau) => 1e9 / tau - kr3),
    fitComponents: 2,
    populationFractions: QX3_TOLUENE_POPULATIONS,
    group: 'qx3-toluene',
    colorShiftNs: shift,
    backgroundPerChannel: 3,
    peakCounts: 10000,
    decayRef: `decays/qx3-toluene-bands.csv#${band}`,
  });
}

// Temperature series of QX-1 in ethanol, 233–353 K: k_nr(T) = k0 + A·exp(−Ea/RT), k_r = 1e8 s⁻¹.
const TEMPERATURES_K = [233.15, 253.15, 273.15, 293.15, 303.15, 313.15, 333.15, 353.15];
for (const tK of TEMPERATURES_K) {
  const column = `T${Math.round(tK)}K`;
  monoSample(`qx1-ethanol-${Math.round(tK)}K`, 'QX-1', 'ethanol', knrArrhenius(tK), 0.03, 2, {
    temperatureK: tK,
    decayRef: `decays/qx1-ethanol-temperature.csv#${column}`,
  });
}

// Quencher titration of QX-2 in acetonitrile: τ0/τ = 1 + k_q τ0 [Q], k_q = 1e10 M⁻¹ s⁻¹, τ0 = 4 ns.
const QUENCHER_M = [0, 0.01, 0.02, 0.03, 0.05, 0.08];
for (const q of QUENCHER_M) {
  const column = `q${q.toFixed(2)}M`;
  monoSample(`qx2-acetonitrile-${column}`, 'QX-2', 'acetonitrile', knr2Mecn + KQ_PER_M_PER_S * q, 0.045, 2, {
    quencherM: q,
    decayRef: `decays/qx2-acetonitrile-quencher.csv#${column}`,
  });
}

// Two long-lived samples again at 80 MHz: the tail of each pulse runs into the next.
monoSample('qx3-cyclohexane-80MHz', 'QX-3', 'cyclohexane', 2.0e7, 0.06, 5, { setting: '80MHz' });
monoSample('qx1-toluene-80MHz', 'QX-1', 'toluene', 6.0e7, 0.035, 5, { setting: '80MHz' });

// ---------------------------------------------------------------------------------------------
// Simulate and write.

for (const setting of Object.keys(SETTINGS) as Setting[]) {
  const s = SETTINGS[setting];
  const m = simulateTcspc({
    components: [{ tauNs: 1, fraction: 1 }],
    totalCounts: 1,
    channels: s.channels,
    binWidthNs: BIN_WIDTH_NS,
    periodNs: s.periodNs,
    irf: irfSpec(setting),
    irfCounts: 150_000,
    // IRF files as after the usual dark-count subtraction: no flat background.
    irfBackgroundPerChannel: 0,
    seed: s.seed,
  });
  write(
    s.irfFile,
    formatHistogramTable(
      { timeNs: m.irf.timeNs, series: [{ name: 'counts', counts: m.irf.counts }] },
      {
        sample: `irf-${setting}`,
        bin_width_ns: String(BIN_WIDTH_NS),
        period_ns: String(s.periodNs),
        excitation_nm: '405',
        note: 'instrument response: scattering suspension detected at the excitation wavelength',
        invented: 'yes, demo data',
      },
    ),
  );
}

/** Multi-column files collect their columns here before they are written. */
const multi = new Map<
  string,
  { setting: Setting; series: { name: string; counts: Float64Array }[]; meta: Record<string, string> }
>();

for (const t of truths) {
  const s = SETTINGS[t.setting];
  const m = simulateTcspc({
    components: t.components.map((c) => ({ tauNs: c.tauNs, fraction: c.amplitudeFraction })),
    fractionKind: 'amplitude',
    peakCounts: t.peakCounts,
    channels: s.channels,
    binWidthNs: BIN_WIDTH_NS,
    periodNs: s.periodNs,
    irf: irfSpec(t.setting),
    colorShiftNs: t.colorShiftNs,
    backgroundPerChannel: t.backgroundPerChannel,
    irfCounts: 0,
    seed: t.seed,
  });
  const [file, column] = t.decayRef.split('#');
  const meta: Record<string, string> = {
    bin_width_ns: String(BIN_WIDTH_NS),
    period_ns: String(s.periodNs),
    excitation_nm: '405',
    emitter: t.emitter,
    solvent: t.solvent,
    invented: 'yes, demo data',
  };
  if (column) {
    const entry = multi.get(file) ?? { setting: t.setting, series: [], meta: { ...meta } };
    entry.series.push({ name: column, counts: m.decay.counts });
    multi.set(file, entry);
  } else {
    write(
      file,
      formatHistogramTable(
        { timeNs: m.decay.timeNs, series: [{ name: 'counts', counts: m.decay.counts }] },
        { sample: t.sample, ...meta },
      ),
    );
  }
}
for (const [file, entry] of multi) {
  const s = SETTINGS[entry.setting];
  const timeNs = Float64Array.from({ length: s.channels }, (_, k) => k * BIN_WIDTH_NS);
  write(file, formatHistogramTable({ timeNs, series: entry.series }, entry.meta));
}

// ---------------------------------------------------------------------------------------------
// Manifests and truth.

const HEADER =
  'sample,decay,irf,components,statistic,qy,qy_err,solvent,absorption,emission,period_ns,group,temperature_k,quencher_m';
function manifestRow(t: SampleTruth): string {
  return [
    t.sample,
    t.decayRef,
    SETTINGS[t.setting].irfFile,
    t.fitComponents,
    'poisson',
    t.qy.toFixed(3),
    t.qyErr.toFixed(2),
    t.solvent,
    t.absorption,
    t.emission,
    SETTINGS[t.setting].periodNs,
    t.group ?? '',
    t.temperatureK ?? '',
    t.quencherM ?? '',
  ].join(',');
}
write('manifest.csv', [HEADER, ...truths.map(manifestRow)].join('\n') + '\n');

// The error-handling demo: three good rows, then a missing decay file, a decay file that is not a
// histogram, and an IRF whose bin width does not match the decay's.
write(
  'bad/garbage-decay.csv',
  '# sample: garbage\ntime_ns,counts\n0,12\n0.0122,9\n0.0244,eleven\n0.0366,7\n',
);
{
  const m = simulateTcspc({
    components: [{ tauNs: 1, fraction: 1 }],
    totalCounts: 1,
    channels: 2048,
    binWidthNs: 2 * BIN_WIDTH_NS,
    periodNs: 50,
    irf: irfSpec('20MHz'),
    irfCounts: 50_000,
    seed: 31,
  });
  write(
    'bad/irf-coarse-bins.csv',
    formatHistogramTable(
      { timeNs: m.irf.timeNs, series: [{ name: 'counts', counts: m.irf.counts }] },
      {
        sample: 'irf-coarse',
        bin_width_ns: String(2 * BIN_WIDTH_NS),
        period_ns: '50',
        invented: 'yes, demo data',
      },
    ),
  );
}
const good = truths.filter((t) => ['qx1-ethanol', 'qx2-ethanol', 'qx3-acetonitrile'].includes(t.sample));
const badRows = [
  'qx9-missing,decays/qx9-not-measured.csv,irf/irf-20MHz.csv,1,poisson,0.500,0.02,ethanol,,,50,,,',
  'garbage-decay,bad/garbage-decay.csv,irf/irf-20MHz.csv,1,poisson,,,ethanol,,,50,,,',
  'qx2-ethanol-bad-irf,decays/qx2-ethanol.csv,bad/irf-coarse-bins.csv,1,poisson,,,ethanol,,,50,,,',
];
write('manifest-with-bad-rows.csv', [HEADER, ...good.map(manifestRow), ...badRows].join('\n') + '\n');

// Written in the repository's formatting, so that the format check passes on a fresh run.
const truthPath = join(here, 'truth.json');
write(
  'truth.json',
  await format(
    JSON.stringify(
      {
        note: 'Invented demo data: the truth each file was simulated from. Rates in s^-1, times in ns.',
        instrument: {
          binWidthNs: BIN_WIDTH_NS,
          settings: Object.fromEntries(
            (Object.keys(SETTINGS) as Setting[]).map((k) => [k, { ...SETTINGS[k], irf: irfSpec(k) }]),
          ),
        },
        arrhenius: { krPerS: KR_TRUE_REF['QX-1'], ...ARR, emitter: 'QX-1', solvent: 'ethanol' },
        sternVolmer: {
          kqPerMPerS: KQ_PER_M_PER_S,
          tau0Ns: TAU0_QX2_MECN_NS,
          emitter: 'QX-2',
          solvent: 'acetonitrile',
        },
        stricklerBergOverTrue: SB_OVER_TRUE,
        samples: truths,
      },
      (_k, v) => (typeof v === 'number' && !Number.isInteger(v) ? Number(v.toPrecision(8)) : v),
    ),
    { ...(await resolveConfig(truthPath)), parser: 'json' },
  ),
);

process.stdout.write(`wrote ${truths.length} samples\n`);
for (const t of truths) {
  const taus = t.components.map((c) => c.tauNs.toFixed(3)).join('/');
  process.stdout.write(
    `${t.sample.padEnd(26)} tau ${taus.padEnd(12)} ns  qy ${t.qyTrue.toFixed(3)}  kr ${t.krPerS.toExponential(3)}  kr_SB ${t.krSbPerS.toExponential(3)}\n`,
  );
}
