import { describe, expect, it } from 'vitest';
import { parseManifest } from '../../src/batch/manifest.js';
import {
  EMPTY_SETTINGS,
  parseSettings,
  resolveSampleSettings,
  SETTINGS_TEMPLATE,
  stripJsonComments,
} from '../../src/batch/settings.js';
import { errorOf } from './errorOf.js';

const resolveOne = (csv: string, settingsText?: string) => {
  const m = parseManifest(csv, { source: 'm.csv' });
  const settings = settingsText ? parseSettings(settingsText, { source: 's.json' }) : EMPTY_SETTINGS;
  return resolveSampleSettings(m.rows[0], settings, 'm.csv');
};

describe('settings file', () => {
  it('strips // and /* */ comments but keeps // inside strings', () => {
    const clean = stripJsonComments('{ // note\n "a": "http://x", /* b */ "c": 1 }');
    expect(JSON.parse(clean)).toEqual({ a: 'http://x', c: 1 });
  });

  it('the template written by --init parses and sets the documented defaults', () => {
    const s = parseSettings(SETTINGS_TEMPLATE, { source: 'lumirate-settings.json' });
    expect(s.defaults.components).toBe(1);
    expect(s.defaults.statistic).toBe('poisson');
    expect(s.fit.maxIterations).toBe(200);
    expect(s.seed).toBe(1);
    expect(s.series).toEqual([]);
  });

  it('names the line and column of a JSON syntax error', () => {
    const e = errorOf(() => parseSettings('{\n  "components": 2,\n  "qy": ,\n}', { source: 's.json' }));
    expect(e.file).toBe('s.json');
    expect(e.message).toBe("s.json line 3, column 9: not valid JSON: expected a value but found ','");
  });

  it('names the line of a bad value and of an unknown key', () => {
    expect(errorOf(() => parseSettings('{\n "components": 7\n}', { source: 's.json' })).message).toBe(
      "s.json line 2, column 2: components '7' must be 1, 2, 3, 4 or auto",
    );
    expect(errorOf(() => parseSettings('{"compnents": 2}', { source: 's.json' })).message).toBe(
      "s.json line 1, column 2: unknown setting 'compnents'",
    );
  });
});

describe('resolveSampleSettings', () => {
  it('a filled manifest cell overrides the settings default; an empty one keeps it', () => {
    const s = resolveOne(
      'sample,decay,components,statistic\na,d.csv,2,\n',
      '{"components": 1, "statistic": "neyman", "qy": 0.4}',
    );
    expect(s.fit.components).toBe(2);
    expect(s.fit.statistic).toBe('neyman');
    expect(s.qy).toBe(0.4);
    expect(s.qyErr).toBe(0);
  });

  it('reads range, fix, period and file#column references', () => {
    const s = resolveOne(
      'sample,decay,irf,range,fix,period_ns\na,d.csv#2,irf.csv,1.5:40,tau1Ns=2.5;shiftNs=0,12.5\n',
    );
    expect(s.decay).toEqual({ path: 'd.csv', column: '2' });
    expect(s.irf).toEqual({ path: 'irf.csv' });
    expect(s.fit.rangeNs).toEqual([1.5, 40]);
    expect(s.fit.fix).toEqual({ tau1Ns: 2.5, shiftNs: 0 });
    expect(s.fit.periodNs).toBe(12.5);
  });

  it('names the manifest cell of a decimal comma, a yield above 1 and an unknown parameter', () => {
    expect(errorOf(() => resolveOne('sample,decay,qy\na,d.csv,"0,5"\n')).message).toBe(
      "m.csv line 2, column 9: qy '0,5' uses a decimal comma; write '0.5' (manifest cells use '.')",
    );
    expect(errorOf(() => resolveOne('sample,decay,qy\na,d.csv,1.2\n')).message).toBe(
      'm.csv line 2, column 9: qy 1.2 must lie between 0 and 1',
    );
    expect(errorOf(() => resolveOne('sample,decay,fix\na,d.csv,tau9Ns=1\n')).message).toMatch(
      /^m\.csv line 2, column 9: fix names an unknown parameter 'tau9Ns'/,
    );
  });

  it('refuses a qy_err without a qy and a backwards range', () => {
    expect(errorOf(() => resolveOne('sample,decay,qy_err\na,d.csv,0.1\n')).message).toBe(
      'm.csv line 2, column 9: qy_err is given without qy',
    );
    expect(errorOf(() => resolveOne('sample,decay,range\na,d.csv,40:2\n')).message).toBe(
      "m.csv line 2, column 9: range '40:2' must end after it starts",
    );
  });

  it('carries metadata columns through untouched', () => {
    const s = resolveOne('sample,decay,temperature_k,note\na,d.csv,293.15,"as is, with comma"\n');
    expect(s.metadata).toEqual({ temperature_k: '293.15', note: 'as is, with comma' });
  });
});
