#!/usr/bin/python3
"""Writes packages/stats/test/fixtures/proportions.json, the external reference values for yes/no outcomes.

Run with Debian's Python (SciPy 1.10, statsmodels 0.13, mpmath):
    /usr/bin/python3 packages/stats/scripts/make-proportion-fixtures.py

Sources, named beside every value in the fixture:
- Wilson interval: statsmodels proportion_confint(method='wilson'), checked against the closed form in mpmath (50 digits).
- Newcombe hybrid score interval: statsmodels confint_proportions_2indep(method='newcomb'), checked against mpmath.
- Odds ratio, Woolf interval: statsmodels Table2x2; when a cell is 0, on the table with ½ added to every cell
  (Haldane–Anscombe; statsmodels' own shift_zeros replaces only the zero cells, a different rule).
- Two-proportion z test (pooled): statsmodels proportions_ztest.
- Pearson's χ² with and without Yates's correction: SciPy chi2_contingency.
- Fisher's exact test: SciPy fisher_exact, and the same rule (sum of P(X = x) ≤ P(X = observed)·(1 + 1e-14)) evaluated
  in exact rational arithmetic; the exact value is the reference, SciPy's is recorded beside it.
- Cox index: the formula in mpmath (the evidence standard publishes no software); with ½ added it equals statsmodels'
  shifted log odds ratio / 1.65, which the script checks.
- Planning: t quantiles and the noncentral t from SciPy (t.ppf, nct).
"""
import json
import math
import os
import sys
from fractions import Fraction

import mpmath as mp
import numpy as np
import scipy
import statsmodels
from scipy import stats
from statsmodels.stats.contingency_tables import Table2x2
from statsmodels.stats.proportion import confint_proportions_2indep, proportion_confint, proportions_ztest

mp.mp.dps = 50
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'test', 'fixtures', 'proportions.json')

# (id, description, yes1, n1, yes2, n2): intervention first.
TABLES = [
    ('ordinary-42-35', 'ordinary table, 42 % vs 35 % of 100', 42, 100, 35, 100),
    ('ordinary-unequal', 'ordinary table, unequal arms', 131, 310, 88, 275),
    ('small-3-7', 'small counts, equal arms (Fisher ties by symmetry)', 3, 10, 7, 10),
    ('small-1-4', 'small counts, unequal arms', 1, 5, 4, 6),
    ('small-2-1', 'tiny arms', 2, 3, 1, 4),
    ('one-each', 'one student per arm', 1, 1, 0, 1),
    ('balanced-5-5', 'identical proportions (Fisher p = 1)', 5, 10, 5, 10),
    ('zero-cell-intervention', 'no yes in the intervention arm', 0, 20, 5, 20),
    ('zero-cell-comparison', 'no yes in the comparison arm', 6, 18, 0, 17),
    ('all-yes-intervention', 'every intervention student yes', 15, 15, 10, 14),
    ('all-no-both', 'no yes anywhere (column sum 0)', 0, 10, 0, 12),
    ('all-yes-both', 'every student yes (column sum 0)', 8, 8, 9, 9),
    ('rare-event', 'rare outcome, moderate arms', 2, 150, 9, 160),
    ('large-exact', 'large arms inside the exact-arithmetic limit (N = 10 000)', 2550, 5000, 2410, 5000),
    ('large-float', 'large arms above it (N = 20 000)', 4200, 10000, 3500, 10000),
    ('large-close', 'large arms, small difference', 6020, 10000, 5980, 10000),
    ('large-tie', 'large equal arms, mirror table (ties by symmetry)', 4950, 10000, 5050, 10000),
]

CONFIDENCES = [0.95, 0.9]


def num(x):
    if x is None:
        return None
    x = float(x)
    if math.isnan(x):
        raise ValueError('NaN in a reference value')
    if math.isinf(x):
        return None
    return x


def rel_close(a, b, rel, abs_=0.0):
    return abs(a - b) <= max(rel * abs(b), abs_)


def wilson_exact(y, n, conf):
    z = mp.sqrt(2) * mp.erfinv(mp.mpf(conf))
    p = mp.mpf(y) / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z / (1 + z * z / n) * mp.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
    lo = max(mp.mpf(0), centre - half)
    hi = min(mp.mpf(1), centre + half)
    if y == 0:
        lo = mp.mpf(0)
    if y == n:
        hi = mp.mpf(1)
    return lo, hi


def wilson_ref(y, n, conf):
    lo_sm, hi_sm = proportion_confint(y, n, alpha=1 - conf, method='wilson')
    lo, hi = wilson_exact(y, n, conf)
    for a, b in ((lo_sm, lo), (hi_sm, hi)):
        if not rel_close(float(a), float(b), 1e-12, 1e-15):
            sys.exit(f'statsmodels Wilson {a} disagrees with mpmath {b} for {y}/{n}')
    return {'ci': [float(lo), float(hi)], 'statsmodels': [float(lo_sm), float(hi_sm)], 'source': 'statsmodels proportion_confint(wilson); mpmath'}


def newcombe_ref(y1, n1, y2, n2, conf):
    lo_sm, hi_sm = confint_proportions_2indep(y1, n1, y2, n2, method='newcomb', compare='diff', alpha=1 - conf)
    l1, u1 = wilson_exact(y1, n1, conf)
    l2, u2 = wilson_exact(y2, n2, conf)
    p1 = mp.mpf(y1) / n1
    p2 = mp.mpf(y2) / n2
    d = p1 - p2
    lo = d - mp.sqrt((p1 - l1) ** 2 + (u2 - p2) ** 2)
    hi = d + mp.sqrt((u1 - p1) ** 2 + (p2 - l2) ** 2)
    for a, b in ((lo_sm, lo), (hi_sm, hi)):
        if not rel_close(float(a), float(b), 1e-10, 1e-14):
            sys.exit(f'statsmodels Newcombe {a} disagrees with mpmath {b} for {y1}/{n1} vs {y2}/{n2}')
    return {'difference': float(d), 'ci': [float(lo), float(hi)], 'statsmodels': [float(lo_sm), float(hi_sm)],
            'source': 'statsmodels confint_proportions_2indep(newcomb); mpmath'}


def odds_ratio_ref(y1, n1, y2, n2, conf):
    table = np.array([[y1, n1 - y1], [y2, n2 - y2]], dtype=float)
    shifted = bool((table == 0).any())
    # statsmodels 0.13's shift_zeros replaces only the zero cells by ½; the published Haldane–Anscombe rule adds ½ to
    # every cell, so the shifted table is passed in and statsmodels computes Woolf's interval on it.
    t = Table2x2(table + 0.5 if shifted else table, shift_zeros=False)
    lo, hi = t.oddsratio_confint(alpha=1 - conf, method='normal')
    cells = [mp.mpf(c) + (mp.mpf(1) / 2 if shifted else 0) for c in table.flatten()]
    log_or = mp.log(cells[0]) - mp.log(cells[1]) - mp.log(cells[2]) + mp.log(cells[3])
    if not rel_close(float(t.log_oddsratio), float(log_or), 1e-12, 1e-14):
        sys.exit(f'statsmodels log OR {t.log_oddsratio} disagrees with mpmath {log_or}')
    return {'oddsRatio': num(t.oddsratio), 'logOddsRatio': num(t.log_oddsratio), 'seLog': num(t.log_oddsratio_se),
            'ci': [num(lo), num(hi)], 'zeroCellAdjusted': shifted,
            'source': 'statsmodels Table2x2 (Woolf), on the table + ½ when a cell is 0'}


def cox_ref(y1, n1, y2, n2, add_half):
    a, b, c, d = (mp.mpf(v) for v in (y1, n1 - y1, y2, n2 - y2))
    if add_half:
        a, b, c, d = a + 0.5, b + 0.5, c + 0.5, d + 0.5
    elif min(a, b, c, d) == 0:
        return None
    p1 = a / (a + b)
    p2 = c / (c + d)
    logit = lambda p: mp.log(p / (1 - p))
    cox = (logit(p1) - logit(p2)) / mp.mpf('1.65')
    N = n1 + n2
    omega = 1 - mp.mpf(3) / (4 * N - 9)
    se = mp.sqrt(1 / a + 1 / b + 1 / c + 1 / d) / mp.mpf('1.65')
    ii = 100 * mp.ncdf(cox) - 50
    ii_c = 100 * mp.ncdf(cox * omega) - 50
    return {'coxIndex': float(cox), 'coxIndexCorrected': float(cox * omega), 'se': float(se), 'seCorrected': float(se * omega),
            'improvementIndex': float(ii), 'improvementIndexCorrected': float(ii_c),
            'proportion1': float(p1), 'proportion2': float(p2), 'source': 'formula in mpmath (WWC Cox index; ω = 1 − 3/(4N − 9))'}


def ztest_ref(y1, n1, y2, n2):
    if y1 + y2 == 0 or y1 + y2 == n1 + n2:
        return None
    out = {'source': 'statsmodels proportions_ztest (pooled)'}
    for alt, sm_alt in (('two-sided', 'two-sided'), ('greater', 'larger'), ('less', 'smaller')):
        z, p = proportions_ztest(np.array([y1, y2]), np.array([n1, n2]), alternative=sm_alt)
        out[alt] = {'z': float(z), 'p': float(p)}
    return out


def chi2_ref(y1, n1, y2, n2):
    table = np.array([[y1, n1 - y1], [y2, n2 - y2]])
    out = {'source': 'SciPy chi2_contingency'}
    for corr in (True, False):
        try:
            stat, p, dof, expected = stats.chi2_contingency(table, correction=corr)
        except ValueError:
            return None
        out['yates' if corr else 'pearson'] = {'statistic': float(stat), 'p': float(p), 'dof': int(dof),
                                                 'expected': expected.tolist()}
    return out


def fisher_exact_rule(y1, n1, y2, n2, alternative):
    """SciPy 1.10's rule in exact rational arithmetic."""
    K = y1 + y2
    N = n1 + n2
    if K == 0 or K == N:
        return Fraction(1)
    lo, hi = max(0, K - n2), min(K, n1)
    w = {}
    c1, c2 = math.comb(n1, lo), math.comb(n2, K - lo)
    for k in range(lo, hi + 1):  # C(n1, k)·C(n2, K − k) by exact integer recurrences
        w[k] = c1 * c2
        if k < hi:
            c1 = c1 * (n1 - k) // (k + 1)
            c2 = c2 * (K - k) // (n2 - K + k + 1)
    total = sum(w.values())
    if alternative == 'less':
        tail = sum(v for k, v in w.items() if k <= y1)
    elif alternative == 'greater':
        tail = sum(v for k, v in w.items() if k >= y1)
    else:
        bound = w[y1] * (10 ** 14 + 1)  # v ≤ w_obs·(1 + 1e-14), in integers
        tail = sum(v for v in w.values() if v * 10 ** 14 <= bound)
    return min(Fraction(1), Fraction(tail, total))


def fisher_ref(y1, n1, y2, n2):
    table = [[y1, n1 - y1], [y2, n2 - y2]]
    out = {'source': 'exact rational arithmetic of SciPy 1.10 fisher_exact rule; SciPy value beside it'}
    for alt in ('two-sided', 'less', 'greater'):
        _, p_scipy = stats.fisher_exact(table, alternative=alt)
        exact = float(fisher_exact_rule(y1, n1, y2, n2, alt))
        agree = rel_close(float(p_scipy), exact, 1e-8, 1e-15)
        out[alt] = {'p': exact, 'scipy': float(p_scipy), 'scipyAgrees': agree}
    return out


def design_effect_ref(y1, n1, y2, n2, m, icc, conf):
    p1 = mp.mpf(y1) / n1
    p2 = mp.mpf(y2) / n2
    se0 = mp.sqrt(p1 * (1 - p1) / n1 + p2 * (1 - p2) / n2)
    if se0 == 0:
        return None
    deff = 1 + (m - 1) * mp.mpf(icc)
    se = se0 * mp.sqrt(deff)
    z = (p1 - p2) / se
    q = mp.sqrt(2) * mp.erfinv(mp.mpf(conf))
    return {'averageClusterSize': m, 'icc': icc, 'confidence': conf, 'designEffect': float(deff), 'seUnadjusted': float(se0),
            'se': float(se), 'z': float(z), 'p': float(2 * mp.ncdf(-abs(z))),
            'ci': [float(p1 - p2 - q * se), float(p1 - p2 + q * se)], 'source': 'formula in mpmath (Donner & Klar design effect)'}


def planning_refs():
    """MDES and power for a proportion, from SciPy's t and noncentral t (Bloom 1995 formulas; SD √(p(1 − p)))."""
    cases = []
    specs = [
        {'design': 'individual', 'n': 400, 'comparisonProportion': 0.35},
        {'design': 'individual', 'n': 120, 'comparisonProportion': 0.1, 'r2': 0.3, 'covariates': 1, 'alternative': 'one-sided'},
        {'design': 'cluster', 'clusters': 40, 'clusterSize': 25, 'icc': 0.1, 'comparisonProportion': 0.6},
        {'design': 'cluster', 'clusters': 12, 'clusterSize': 60, 'icc': 0.05, 'r2Level2': 0.5, 'covariates': 1,
         'comparisonProportion': 0.8, 'p': 0.4},
    ]
    for spec in specs:
        p = spec.get('p', 0.5)
        alpha = 0.05
        pq = p * (1 - p)
        if spec['design'] == 'individual':
            df = spec['n'] - spec.get('covariates', 0) - 2
            se = math.sqrt((1 - spec.get('r2', 0)) / (pq * spec['n']))
        else:
            J, m, rho = spec['clusters'], spec['clusterSize'], spec['icc']
            df = J - spec.get('covariates', 0) - 2
            se = math.sqrt(rho * (1 - spec.get('r2Level2', 0)) / (pq * J) + (1 - rho) * (1 - spec.get('r2Level1', 0)) / (pq * J * m))
        one = spec.get('alternative') == 'one-sided'
        t_alpha = stats.t.ppf(1 - alpha if one else 1 - alpha / 2, df)
        t_power = stats.t.ppf(0.8, df)
        mdes = (t_alpha + t_power) * se
        pc = spec['comparisonProportion']
        sd = math.sqrt(pc * (1 - pc))
        diff = 0.1 if pc + 0.1 <= 1 else -0.1
        delta = diff / sd / se
        if one:
            pw = stats.nct.sf(t_alpha, df, delta)
        else:
            pw = stats.nct.sf(t_alpha, df, delta) + stats.nct.cdf(-t_alpha, df, delta)
        cases.append({'input': spec, 'detectableDifference': float(mdes * sd), 'mdes': float(mdes), 'df': df,
                      'powerDifference': diff, 'power': float(pw), 'source': 'SciPy t.ppf and nct (Bloom 1995 formulas)'})
    return cases


def main():
    cases = []
    for tid, desc, y1, n1, y2, n2 in TABLES:
        case = {'id': tid, 'description': desc, 'intervention': {'yes': y1, 'n': n1}, 'comparison': {'yes': y2, 'n': n2}}
        case['wilson'] = {str(c): [wilson_ref(y1, n1, c), wilson_ref(y2, n2, c)] for c in CONFIDENCES}
        case['newcombe'] = {str(c): newcombe_ref(y1, n1, y2, n2, c) for c in CONFIDENCES}
        case['oddsRatio'] = odds_ratio_ref(y1, n1, y2, n2, 0.95)
        case['cox'] = {'refuse': cox_ref(y1, n1, y2, n2, False), 'addHalf': cox_ref(y1, n1, y2, n2, True)}
        # With ½ added, the Cox index is the shifted log odds ratio over 1.65 (statsmodels), a second source.
        if case['oddsRatio']['zeroCellAdjusted'] or case['cox']['refuse'] is not None:
            check = case['cox']['addHalf' if case['oddsRatio']['zeroCellAdjusted'] else 'refuse']['coxIndex']
            if not rel_close(check, case['oddsRatio']['logOddsRatio'] / 1.65, 1e-12, 1e-14):
                sys.exit(f'{tid}: Cox index disagrees with statsmodels log odds ratio / 1.65')
        case['zTest'] = ztest_ref(y1, n1, y2, n2)
        case['chiSquare'] = chi2_ref(y1, n1, y2, n2)
        case['fisher'] = fisher_ref(y1, n1, y2, n2)
        case['designEffect'] = design_effect_ref(y1, n1, y2, n2, 24.5, 0.12, 0.95)
        cases.append(case)
    out = {
        'generator': 'packages/stats/scripts/make-proportion-fixtures.py',
        'versions': {'python': sys.version.split()[0], 'scipy': scipy.__version__, 'statsmodels': statsmodels.__version__,
                     'mpmath': mp.__version__, 'numpy': np.__version__},
        'tables': cases,
        'planning': planning_refs(),
    }
    with open(OUT, 'w') as f:
        json.dump(out, f, indent=1)
        f.write('\n')
    disagreements = [(c['id'], alt) for c in cases for alt in ('two-sided', 'less', 'greater') if not c['fisher'][alt]['scipyAgrees']]
    print(f'wrote {OUT}: {len(cases)} tables; SciPy fisher_exact disagrees with the exact rule in {disagreements or "none"}')


if __name__ == '__main__':
    main()
