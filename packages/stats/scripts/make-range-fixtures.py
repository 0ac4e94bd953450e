#!/usr/bin/python3
"""Writes packages/stats/test/fixtures/range.json: exact references for data where double rounding used to matter.

Run with Debian's Python (SciPy 1.10, mpmath):  /usr/bin/python3 packages/stats/scripts/make-range-fixtures.py

- Brown–Forsythe W for groups of even size far from zero: the median (a + b)/2 and every |x − median| in exact rational
  arithmetic (Python fractions), p from mpmath's regularised incomplete beta (50 digits); SciPy 1.10's levene value,
  whose median is rounded to double, is recorded beside it to show the gap.
Large samples are regenerated from make-fixtures.py's LCG (`generate`), which the tests reproduce bit for bit.
"""
import importlib.util
import json
import os
import sys
from fractions import Fraction

import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
spec = importlib.util.spec_from_file_location('make_fixtures', os.path.join(HERE, 'make-fixtures.py'))
mf = importlib.util.module_from_spec(spec)
spec.loader.exec_module(mf)
OUT = os.path.join(HERE, '..', 'test', 'fixtures', 'range.json')


def exact_median(values):
    s = sorted(Fraction(v) for v in values)
    n = len(s)
    return s[n // 2] if n % 2 else (s[n // 2 - 1] + s[n // 2]) / 2


def brown_forsythe_exact(groups):
    zs = []
    for g in groups:
        m = exact_median(g)
        zs.append([abs(Fraction(x) - m) for x in g])
    N = sum(len(z) for z in zs)
    k = len(zs)
    means = [sum(z) / len(z) for z in zs]
    grand = sum(sum(z) for z in zs) / N
    between = sum(len(z) * (zm - grand) ** 2 for z, zm in zip(zs, means))
    within = sum(sum((x - zm) ** 2 for x in z) for z, zm in zip(zs, means))
    w = Fraction(N - k, k - 1) * between / within
    return w, k - 1, N - k


CASES = [
    ('even-small-1e9', 'two groups of even size (10, 12) near 1e9, 4–5 decimals (the copy-and-select path)',
     [[1000000006.1127, 1000000000.7117, 1000000002.8526, 1000000007.7184, 1000000005.9203, 1000000002.2307,
       1000000007.3153, 1000000001.3697, 1000000006.0211, 1000000001.8042],
      [1000000001.77788, 1000000008.58377, 1000000002.63835, 1000000002.45284, 1000000009.61584, 1000000008.94504,
       1000000002.95854, 1000000006.92549, 1000000010.53052, 1000000010.43146, 1000000012.14642, 1000000002.02657]]),
    ('even-large-1e9', 'two groups of even size (5000, 6000) near 1e9, rounded to 1/10 000 (the one-pass large path)',
     [{'seed': 301, 'n': 5000, 'mean': 1e9, 'sd': 2.0, 'round': 4}, {'seed': 302, 'n': 6000, 'mean': 1e9, 'sd': 2.1, 'round': 4}]),
]


def main():
    out = []
    for cid, desc, groups in CASES:
        data = [mf.generate(g) for g in groups]
        w, d1, d2 = brown_forsythe_exact(data)
        p = mf.f_sf(mf.mpf(w), d1, d2)
        sp = stats.levene(*data, center='median')
        out.append({'id': cid, 'description': desc, 'groups': groups, 'df1': d1, 'df2': d2,
                    'statistic': float(w), 'p': float(p), 'scipyStatistic': float(sp.statistic), 'scipyP': float(sp.pvalue),
                    'source': 'exact fractions (median and deviations), mpmath p; SciPy levene(center=median) beside it'})
        print(f'{cid}: exact W {float(w)!r}, SciPy {sp.statistic!r}, rel gap {abs(sp.statistic - float(w)) / float(w):.2e}')
    with open(OUT, 'w') as f:
        json.dump({'generator': 'packages/stats/scripts/make-range-fixtures.py',
                   'versions': {'python': sys.version.split()[0], 'scipy': scipy.__version__},
                   'levene': out}, f, indent=1)
        f.write('\n')


if __name__ == '__main__':
    main()
