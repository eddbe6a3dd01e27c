import { describe, expect, it } from 'vitest';
import {
  metadataBinWidthNs,
  metadataCountRatePerS,
  metadataNumber,
  metadataPeriodNs,
  metadataWavelengthNm,
  summariseMetadata,
} from '../../src/io/metadata.js';
import { readTextTable } from '../../src/io/textTable.js';
import { InputError } from '../../src/errors.js';
import { expectInputError } from './expectInputError.js';

describe('metadataBinWidthNs', () => {
  // Unit factors: SI prefixes femto 1e-15, pico 1e-12, nano 1e-9, micro 1e-6 (SI Brochure, 9th ed. 2019, table 7).
  it.each([
    [{ bin_width_ns: '0.0122' }, 0.0122],
    [{ bin_width_ps: '12.2' }, 0.0122],
    [{ resolution_ps: '25' }, 0.025],
    [{ channel_width_ns: '0.05' }, 0.05],
    [{ time_per_channel_fs: '500' }, 0.0005],
    [{ bin_width: '16 ps' }, 0.016],
    [{ bin_width: '0,016 ns' }, 0.016],
  ])('reads %j as %f ns', (meta, ns) => {
    expect(metadataBinWidthNs(meta)).toBeCloseTo(ns, 15);
  });

  it('is undefined without a bin-width key', () => {
    expect(metadataBinWidthNs({ sample: 'x', period_ns: '12.5' })).toBeUndefined();
  });

  it('refuses a value that is not a positive number, and a unit-less key with a unit-less value', () => {
    expect(() => metadataBinWidthNs({ bin_width_ns: 'fast' })).toThrow(InputError);
    expect(() => metadataBinWidthNs({ bin_width_ns: '-1' })).toThrow(/not a positive number/);
    expect(() => metadataBinWidthNs({ bin_width: '16' })).toThrow(/with a unit/);
    expect(() => metadataBinWidthNs({ bin_width_ps: '16 ns' })).toThrow(/plain number of ps/);
  });

  it('refuses two keys that disagree, and accepts two that agree', () => {
    expect(() => metadataBinWidthNs({ bin_width_ns: '0.016', resolution_ps: '25' })).toThrow(
      /disagrees on the bin width/,
    );
    expect(metadataBinWidthNs({ bin_width_ns: '0.016', resolution_ps: '16' })).toBeCloseTo(0.016, 15);
  });

  it('names the file and the line of a bad value read from a table', () => {
    const t = readTextTable('# sample: a\n# bin_width_ps: twelve\n1\n2\n', 'x.txt');
    expectInputError(() => metadataBinWidthNs(t.metadata, { source: 'x.txt', lines: t.metadataLines }), {
      file: 'x.txt',
      line: 2,
      match: /bin_width_ps: twelve/,
    });
  });
});

describe('metadataPeriodNs', () => {
  it.each([
    // period = 1 / repetition rate (definition); 80 MHz → 12.5 ns, 40 MHz → 25 ns, 1 kHz → 1 ms.
    [{ period_ns: '12.5' }, 12.5],
    [{ rep_period_us: '0.025' }, 25],
    [{ rep_rate_mhz: '80' }, 12.5],
    [{ repetition_rate_hz: '4e7' }, 25],
    [{ rep_rate: '1 kHz' }, 1e6],
    [{ sync_rate_mhz: '20' }, 50],
  ])('reads %j as %f ns', (meta, ns) => {
    expect(metadataPeriodNs(meta)).toBeCloseTo(ns, 9);
  });

  it('refuses a period and a rate that disagree', () => {
    expect(() => metadataPeriodNs({ period_ns: '12.5', rep_rate_mhz: '40' })).toThrow(/excitation period/);
    expect(metadataPeriodNs({ period_ns: '12.5', rep_rate_mhz: '80' })).toBeCloseTo(12.5, 12);
  });

  it('refuses a rate that is not a positive number', () => {
    expect(() => metadataPeriodNs({ rep_rate_mhz: '0' })).toThrow(InputError);
    expect(() => metadataPeriodNs({ rep_rate: '80' })).toThrow(/with a unit/);
  });
});

describe('metadata keys', () => {
  it('are lower-cased with spaces turned to underscores, from "# key: value" and "# key = value" lines', () => {
    const t = readTextTable(
      '# Sample Name: demo A\n# Excitation nm = 405\n#Detector count rate per s: 2e4\n# a plain comment\n1\n',
      'm.txt',
    );
    expect(t.metadata).toEqual({
      sample_name: 'demo A',
      excitation_nm: '405',
      detector_count_rate_per_s: '2e4',
    });
    expect(metadataNumber(t.metadata, 'excitation_nm')).toBe(405);
    expect(metadataNumber(t.metadata, 'emission_nm')).toBeUndefined();
    expect(() => metadataNumber({ excitation_nm: 'blue' }, 'excitation_nm')).toThrow(/not a plain number/);
  });

  it('warn when a key is given twice with different values, and keep the later', () => {
    const t = readTextTable('# period_ns: 12.5\n# period_ns: 25\n1\n', 'm.txt');
    expect(t.metadata.period_ns).toBe('25');
    expect(t.warnings.join()).toMatch(/given twice \(line 1: '12\.5', line 2: '25'\)/);
  });
});

describe('summariseMetadata', () => {
  it('reads sample, bin width, period, count rate and wavelengths, null where absent', () => {
    const meta = {
      sample: 'demo-A',
      bin_width_ps: '12.2',
      rep_rate_mhz: '80',
      count_rate_kcps: '25',
      excitation_nm: '405',
      emission: '520 nm',
    };
    expect(summariseMetadata(meta)).toEqual({
      sample: 'demo-A',
      binWidthNs: expect.closeTo(0.0122, 15),
      periodNs: expect.closeTo(12.5, 12),
      countRatePerS: 25000,
      excitationNm: 405,
      emissionNm: 520,
    });
    expect(summariseMetadata({})).toEqual({
      sample: null,
      binWidthNs: null,
      periodNs: null,
      countRatePerS: null,
      excitationNm: null,
      emissionNm: null,
    });
  });

  it('keeps free text under a bare wavelength or rate key as text, but refuses a bad number under a key with a unit', () => {
    expect(metadataWavelengthNm({ excitation: 'pulsed diode laser' }, 'excitation')).toBeUndefined();
    expect(() => metadataWavelengthNm({ excitation_nm: 'blue' }, 'excitation')).toThrow(InputError);
    expect(metadataCountRatePerS({ count_rate_per_s: '2e4' })).toBe(2e4);
    expect(() => metadataCountRatePerS({ count_rate_cps: '2e4', count_rate_kcps: '40' })).toThrow(
      /disagrees on the count rate/,
    );
  });
});
