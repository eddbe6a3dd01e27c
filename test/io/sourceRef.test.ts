import { describe, expect, it } from 'vitest';
import { splitSourceRef } from '../../src/io/sourceRef.js';

describe('splitSourceRef', () => {
  it('splits file#column at the last #', () => {
    expect(splitSourceRef('decays.csv#A-ethanol')).toEqual({ path: 'decays.csv', column: 'A-ethanol' });
    expect(splitSourceRef('run#2/decays.csv#3')).toEqual({ path: 'run#2/decays.csv', column: '3' });
  });

  it('leaves a plain path alone and ignores a trailing #', () => {
    expect(splitSourceRef('data/decay.csv')).toEqual({ path: 'data/decay.csv' });
    expect(splitSourceRef('decay.csv#')).toEqual({ path: 'decay.csv' });
  });
});
