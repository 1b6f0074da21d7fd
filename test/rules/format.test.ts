import { describe, expect, it } from 'vitest';
import { fmt, fmtList, fmtValue } from '../../server/src/rules/format';

describe('fmt: 2-3 significant digits for messages', () => {
  it.each([
    // Lin et al. 2023, Table 1 (recalled from memory): scaled linear sqrt(abar_T) 0.068265, SNR_T 0.004682.
    [0.068265, '0.068'],
    [0.004682, '4.7e-3'],
    // Lin et al. 2023, Table 1 (from memory): linear SNR_T 4.035993e-05.
    [4.035993e-5, '4e-5'],
    // Lin et al. 2023, Table 1 (from memory): cosine SNR_T 2.4287e-09.
    [2.4287e-9, '2.4e-9'],
    // sqrt(1 - abar_T) 0.997667 must not round to a misleading "1".
    [0.997667, '0.998'],
    [0, '0'],
    [999, '999'],
    [1000, '1000'],
    [0.7, '0.7'],
    [7.5, '7.5'],
    [0.012, '0.012'],
    [0.00085, '8.5e-4'],
    [1e-4, '1e-4'],
    // eslint-disable-next-line no-loss-of-precision -- the double next above 4096 is the point
    [4096.0000000000005, '4096'],
    [14.56, '14.6'],
    [-1.386294, '-1.39'],
    [1175.47, '1175'],
    [2.5e7, '2.5e7'],
    [Infinity, 'infinity'],
    [NaN, 'NaN'],
  ])('fmt(%s) = %s', (x, want) => {
    expect(fmt(x)).toBe(want);
  });

  it('lists a few values and the last', () => {
    expect(fmtList([901, 801, 701, 601, 1])).toBe('901, 801, 701, ..., 1');
    expect(fmtList([999, 0])).toBe('999, 0');
  });

  it('keeps 6 significant digits for values written into files', () => {
    expect(fmtValue(0.00085000001)).toBe(0.00085);
    expect(fmtValue(0.123456789)).toBe(0.123457);
    expect(fmtValue(1)).toBe(1);
  });
});
