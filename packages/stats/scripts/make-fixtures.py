#!/usr/bin/python3
"""Regenerates packages/stats/test/fixtures/reference.json, the external reference values for the stats tests.

Run with Debian's Python (SciPy 1.10, statsmodels, mpmath):  /usr/bin/python3 packages/stats/scripts/make-fixtures.py

Every expected value comes from SciPy / statsmodels. Each is also recomputed exactly (Python fractions for means,
variances and sums; mpmath at 50 digits for t, F, beta and gamma functions); where SciPy's float64 pipeline itself
misses the tolerance (data far from zero, where its rounded means lose digits), the fixture keeps SciPy's value for
the record but marks the exact value as the reference ("source": "exact"). Large samples are not stored: both this
script and the tests regenerate them from the same integer LCG and exactly-rounded arithmetic (see `generate`).
"""
import json
import math
import os
import sys
from fractions import Fraction

import mpmath as mp
import numpy as np
import scipy
import scipy.special as sc
import statsmodels
import statsmodels.api as sm
from scipy import stats
from statsmodels.stats.meta_analysis import combine_effects
from statsmodels.stats.multitest import multipletests

mp.mp.dps = 50
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'test', 'fixtures', 'reference.json')
REL_STAT = 1e-10  # agreement targets, as in the tests
REL_P = 1e-8
ABS_P = 1e-15


# --- data generation shared with test/fixtures.ts --------------------------------------------------------------
def generate(spec):
    """Park–Miller LCG (multiplier 48271, modulus 2^31 − 1) feeding distributions built only from +, −, ×, / and floor,
    which IEEE 754 rounds identically in Python and JavaScript, so both sides get bit-identical data."""
    if isinstance(spec, list):
        return [float(v) for v in spec]
    s = spec['seed']
    m = 2147483647

    def uniform():
        nonlocal s
        s = (s * 48271) % m
        return s / m

    out = []
    kind = spec.get('kind', 'normal')
    for _ in range(spec['n']):
        if kind == 'normal':  # Irwin–Hall: sum of 12 uniforms − 6, approximately N(0, 1)
            z = 0.0
            for _ in range(12):
                z += uniform()
            z = z - 6.0
        elif kind == 'skewed':  # square of a normal-ish value: chi-square(1)-like, right-skewed
            z = 0.0
            for _ in range(12):
                z += uniform()
            z = (z - 6.0) * (z - 6.0)
        elif kind == 'heavy':  # ratio of uniforms: heavy right tail
            z = uniform() / (uniform() + 0.05)
        elif kind == 'uniform':
            z = uniform()
        else:
            raise ValueError(kind)
        x = spec.get('mean', 0.0) + spec.get('sd', 1.0) * z
        if 'round' in spec:
            scale = 10.0 ** spec['round']
            x = math.floor(x * scale + 0.5) / scale
        out.append(x)
    return out


# --- exact helpers ----------------------------------------------------------------------------------------------
def exact_median(fx):
    s = sorted(fx)
    n = len(s)
    return s[n // 2] if n % 2 else (s[n // 2 - 1] + s[n // 2]) / 2


def F(x):
    return Fraction(x)


def mpf(fr):
    if isinstance(fr, Fraction):
        return mp.mpf(fr.numerator) / mp.mpf(fr.denominator)
    return mp.mpf(fr)


class Exact:
    """Exact sums of a sample (as fractions)."""

    def __init__(self, xs):
        fx = [F(v) for v in xs]
        self.n = len(fx)
        self.fx = fx
        self.s1 = sum(fx, Fraction(0))
        self.s2 = sum((v * v for v in fx), Fraction(0))
        self.mean = self.s1 / self.n
        self.m2 = self.s2 - self.n * self.mean * self.mean
        self.var = self.m2 / (self.n - 1) if self.n > 1 else None

    def central(self, k):
        # Σ (x − mean)^k / n, exactly, via power sums
        mean = self.mean
        total = Fraction(0)
        for v in self.fx:
            total += (v - mean) ** k
        return total / self.n


def betainc_cf(a, b, x):
    """Regularized I_x(a, b) at 50 digits by the Lentz continued fraction (Numerical Recipes §6.4). mpmath's betainc
    uses a hypergeometric series that does not converge for the large parameters of n = 100 000 samples."""
    a = mp.mpf(a)
    b = mp.mpf(b)
    x = mp.mpf(x)
    if x <= 0:
        return mp.mpf(0)
    if x >= 1:
        return mp.mpf(1)
    if x > (a + 1) / (a + b + 2):
        return 1 - betainc_cf(b, a, 1 - x)
    front = mp.exp(a * mp.log(x) + b * mp.log1p(-x) - (mp.loggamma(a) + mp.loggamma(b) - mp.loggamma(a + b)))
    tiny = mp.mpf(10) ** -200
    c = mp.mpf(1)
    d = 1 - (a + b) * x / (a + 1)
    d = 1 / (d if abs(d) > tiny else tiny)
    h = d
    for m in range(1, 10 ** 6):
        m2 = 2 * m
        aa = m * (b - m) * x / ((a - 1 + m2) * (a + m2))
        d = 1 + aa * d
        d = 1 / (d if abs(d) > tiny else tiny)
        c = 1 + aa / c
        c = c if abs(c) > tiny else tiny
        h *= d * c
        aa = -(a + m) * (a + b + m) * x / ((a + m2) * (a + 1 + m2))
        d = 1 + aa * d
        d = 1 / (d if abs(d) > tiny else tiny)
        c = 1 + aa / c
        c = c if abs(c) > tiny else tiny
        delta = d * c
        h *= delta
        if abs(delta - 1) < mp.mpf(10) ** -45:
            return front * h / a
    raise RuntimeError('betainc_cf did not converge')


def t_sf(t, df):
    t = mp.mpf(t)
    df = mp.mpf(df)
    x = df / (df + t * t)
    tail = betainc_cf(df / 2, mp.mpf(1) / 2, x) / 2
    return tail if t > 0 else 1 - tail


def t_cdf(t, df):
    return t_sf(-mp.mpf(t), df)


def t_two_sided(t, df):
    t = mp.mpf(t)
    df = mp.mpf(df)
    return min(mp.mpf(1), betainc_cf(df / 2, mp.mpf(1) / 2, df / (df + t * t)))


def t_quantile(p, df):
    p = mp.mpf(p)
    start = float(stats.t.ppf(float(p), float(df)))
    return mp.findroot(lambda q: t_cdf(q, df) - p, mp.mpf(start))


def f_cdf(f, d1, d2):
    f = mp.mpf(f)
    d1 = mp.mpf(d1)
    d2 = mp.mpf(d2)
    return betainc_cf(d1 / 2, d2 / 2, d1 * f / (d1 * f + d2))


def f_sf(f, d1, d2):
    f = mp.mpf(f)
    d1 = mp.mpf(d1)
    d2 = mp.mpf(d2)
    return betainc_cf(d2 / 2, d1 / 2, d2 / (d1 * f + d2))


def p_value(t, df, alternative):
    if alternative == 'two-sided':
        return t_two_sided(t, df)
    return t_sf(t, df) if alternative == 'greater' else t_cdf(t, df)


def interval(est, se, df, conf, alternative):
    if alternative == 'two-sided':
        q = t_quantile(mp.mpf(1) / 2 + mp.mpf(conf) / 2, df)
        return [est - q * se, est + q * se]
    q = t_quantile(conf, df)
    return [est - q * se, None] if alternative == 'greater' else [None, est + q * se]


def num(v):
    if v is None:
        return None
    v = float(v)
    if math.isinf(v):
        return None
    return v


def close(a, b, rel, absolute=0.0):
    if a is None or b is None:
        return a is None and b is None
    a = float(a)
    b = float(b)
    return abs(a - b) <= max(rel * abs(b), absolute)


def pick(name, scipy_value, exact_value, rel, absolute=0.0, notes=None):
    """Reference entry: SciPy's value unless it misses the tolerance against the exact value."""
    s = num(scipy_value)
    e = num(exact_value)
    if close(s, e, rel, absolute):
        return {'value': s, 'source': 'scipy', 'exact': e}
    if notes is not None:
        notes.append(f'{name}: SciPy {s!r} vs exact {e!r}')
    return {'value': e, 'source': 'exact', 'scipy': s}


def pick_interval(name, scipy_ci, exact_ci, notes):
    return [pick(f'{name}[{i}]', scipy_ci[i], exact_ci[i], REL_STAT, 1e-13, notes) for i in range(2)]


# --- Shapiro–Wilk in float64 -------------------------------------------------------------------------------------
SW_C1 = [0, 0.221157, -0.147981, -2.07119, 4.434685, -2.706056]
SW_C2 = [0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633]
SW_C3 = [0.544, -0.39978, 0.025054, -6.714e-4]
SW_C4 = [1.3822, -0.77857, 0.062767, -0.0020322]
SW_C5 = [-1.5861, -0.31082, -0.083751, 0.0038915]
SW_C6 = [-0.4803, -0.082676, 0.0030302]


def poly(c, x):
    return sum(ci * x ** i for i, ci in enumerate(c))


def shapiro_p_from_w(w, n):
    """Royston's (1995) null distribution of W (AS R94), in float64."""
    if n == 3:
        return max(0.0, 6 / math.pi * (math.asin(math.sqrt(w)) - math.pi / 3))
    y = math.log(1 - w)
    if n <= 11:
        gamma = poly([-2.273, 0.459], n)
        if y >= gamma:
            return 1e-19
        y = -math.log(gamma - y)
        m, sd = poly(SW_C3, n), math.exp(poly(SW_C4, n))
    else:
        m, sd = poly(SW_C5, math.log(n)), math.exp(poly(SW_C6, math.log(n)))
    return float(stats.norm.sf((y - m) / sd))


def shapiro_double(x):
    """W and p of AS R94 (Royston 1995) ported to float64 NumPy: W as the squared correlation of the sorted data
    with Royston's coefficients. SciPy runs the same algorithm in single precision."""
    x = np.sort(np.asarray(x, dtype=np.float64))
    n = len(x)
    nn2 = n // 2
    if n == 3:
        a = np.array([math.sqrt(0.5)])
    else:
        m = sc.ndtri((np.arange(1, nn2 + 1) - 0.375) / (n + 0.25))
        summ2 = 2 * np.sum(m * m)
        rsn = 1 / math.sqrt(n)
        a1 = poly(SW_C1, rsn) - m[0] / math.sqrt(summ2)
        a = -m.copy()
        if n > 5:
            a2 = -m[1] / math.sqrt(summ2) + poly(SW_C2, rsn)
            fac = math.sqrt((summ2 - 2 * m[0] ** 2 - 2 * m[1] ** 2) / (1 - 2 * a1 ** 2 - 2 * a2 ** 2))
            a = -m / -fac
            a[0], a[1] = a1, a2
            a[2:] = m[2:] / -fac
        else:
            fac = math.sqrt((summ2 - 2 * m[0] ** 2) / (1 - 2 * a1 ** 2))
            a = m / -fac
            a[0] = a1
    # full antisymmetric coefficient vector for the sorted sample: −a_1 … (0) … a_1
    full = np.zeros(n)
    full[:nn2] = -a
    full[n - nn2:] = a[::-1]
    xs = x - x[n // 2]  # exact for data far from zero (Sterbenz), then centre
    xs = xs - xs.mean()
    cs = full - full.mean()
    w = (cs @ xs) ** 2 / ((cs @ cs) * (xs @ xs))
    return float(w), shapiro_p_from_w(float(w), n)


# --- two-sample cases -------------------------------------------------------------------------------------------
def g(seed, n, mean=0.0, sd=1.0, **kw):
    d = {'seed': seed, 'n': n, 'mean': mean, 'sd': sd}
    d.update(kw)
    return d


CASES = [
    # tiny n
    ('tiny-2-2', 'two values per group', [1.0, 3.0], [2.0, 7.0], 'two-sided', 0.95),
    ('tiny-2-3', 'two vs three values', [10.5, 12.25], [8.0, 9.5, 13.0], 'two-sided', 0.95),
    ('tiny-3-3', 'three per group, clear difference', [4.1, 4.5, 3.9], [6.2, 5.8, 6.9], 'two-sided', 0.95),
    ('tiny-3-4-less', 'tiny groups, one-sided less', [4.1, 4.5, 3.9], [6.2, 5.8, 6.9, 7.1], 'less', 0.95),
    # unequal n
    ('unequal-5-12', 'unequal group sizes', g(11, 5, 50, 10), g(12, 12, 55, 10), 'two-sided', 0.95),
    ('unequal-8-30', 'unequal group sizes', g(13, 8, 250, 40), g(14, 30, 262, 40), 'two-sided', 0.95),
    ('unequal-4-50', 'very unequal group sizes', g(15, 4, 0, 1), g(16, 50, 0.4, 1), 'two-sided', 0.95),
    ('unequal-7-200-greater', 'small vs large group, one-sided greater', g(17, 7, 101, 15), g(18, 200, 100, 15), 'greater', 0.95),
    # unequal variances
    ('unequal-var-10-40', 'SD 1 vs 5', g(21, 10, 0, 1), g(22, 40, 0.5, 5), 'two-sided', 0.95),
    ('unequal-var-20-20', 'SD 1 vs 10, equal n', g(23, 20, 3, 1), g(24, 20, 0, 10), 'two-sided', 0.95),
    ('unequal-var-small-large', 'small group has the larger SD', g(25, 6, 70, 20), g(26, 60, 60, 2), 'two-sided', 0.95),
    ('unequal-var-90', 'unequal variances, 90% interval', g(27, 35, 10, 3), g(28, 28, 12, 7), 'two-sided', 0.90),
    # ties
    ('ties-integers-15', 'integer scores with ties', g(31, 15, 20, 3, round=0), g(32, 15, 22, 3, round=0), 'two-sided', 0.95),
    ('ties-integers-30-25', 'integer scores, many ties', g(33, 30, 10, 1.5, round=0), g(34, 25, 11, 1.5, round=0), 'two-sided', 0.95),
    ('ties-likert', 'five-point ratings', [1, 2, 2, 3, 3, 3, 4, 4, 5, 5, 3, 2, 4, 3, 3, 4, 2, 5, 4, 3],
     [2, 3, 3, 4, 4, 4, 5, 5, 5, 3, 4, 4, 5, 2, 3, 4, 5, 4, 4, 5, 3, 4], 'two-sided', 0.95),
    ('ties-half-points-greater', 'half-point scores, one-sided greater', g(35, 40, 7, 2, round=0), g(36, 45, 6.5, 2, round=0), 'greater', 0.95),
    # large offsets
    ('offset-1e9-noise', '1e9 + N(0,1) noise', g(41, 50, 1e9, 1), g(42, 50, 1e9 + 0.6, 1), 'two-sided', 0.95),
    ('offset-1e6-small-noise', '1e6 + noise with SD 0.001', g(43, 30, 1e6, 0.001), g(44, 35, 1e6 + 0.0004, 0.001), 'two-sided', 0.95),
    ('offset-1e9-rounded', '1e9 + noise rounded to 1/1000', g(45, 64, 1e9, 2, round=3), g(46, 64, 1e9 + 1, 2, round=3), 'two-sided', 0.95),
    ('offset-1e12-less', '1e12 offset, one-sided less', g(47, 40, 1e12, 50), g(48, 44, 1e12 + 20, 50), 'less', 0.95),
    # n = 100 000
    ('n100000-normal', 'n = 100 000 per group, small true difference', g(51, 100000, 250, 40), g(52, 100000, 250.5, 40), 'two-sided', 0.95),
    ('n100000-ties-greater', 'n = 100 000 vs 100 001 integer scores, one-sided greater', g(53, 100000, 30, 6, round=0),
     g(54, 100001, 29.95, 6, round=0), 'greater', 0.95),
    # one-sided alternatives and other confidence levels
    ('greater-20-22', 'one-sided greater', g(61, 20, 12, 4), g(62, 22, 10, 4), 'greater', 0.95),
    ('less-20-22', 'one-sided less', g(63, 20, 10, 4), g(64, 22, 12, 4), 'less', 0.95),
    ('greater-wrong-direction', 'one-sided greater when a < b (p near 1)', g(65, 25, 8, 3), g(66, 25, 11, 3), 'greater', 0.95),
    ('two-sided-99', 'two-sided, 99% interval', g(67, 45, 100, 15), g(68, 50, 108, 15), 'two-sided', 0.99),
    ('less-90', 'one-sided less, 90% bound', g(69, 18, 5, 1), g(70, 19, 5.3, 1), 'less', 0.90),
    # equal n and variances (Welch = Student)
    ('equal-n-var', 'equal n and equal sample variances', [1.0, 2.0, 3.0, 4.0, 5.0], [3.0, 4.0, 5.0, 6.0, 7.0], 'two-sided', 0.95),
    ('equal-n-30', 'equal n, similar variances', g(71, 30, 0, 1), g(72, 30, 0.3, 1), 'two-sided', 0.95),
    # shapes
    ('skewed-40-40', 'right-skewed scores', g(81, 40, 0, 1, kind='skewed'), g(82, 40, 0.5, 1, kind='skewed'), 'two-sided', 0.95),
    ('heavy-tail-60-55', 'heavy right tail', g(83, 60, 0, 1, kind='heavy'), g(84, 55, 0, 1.3, kind='heavy'), 'two-sided', 0.95),
    ('uniform-25-25', 'uniform scores', g(85, 25, 0, 10, kind='uniform'), g(86, 25, 1, 10, kind='uniform'), 'two-sided', 0.95),
    ('skewed-large-6000', 'skewed, 6000 vs 5000 (large-sample paths)', g(87, 6000, 10, 2, kind='skewed'), g(88, 5000, 10.2, 2, kind='skewed'),
     'two-sided', 0.95),
    # realistic score data
    ('scores-25-27', 'scale scores, class-sized groups', g(91, 25, 250, 40), g(92, 27, 262, 40), 'two-sided', 0.95),
    ('scores-480-500', 'scale scores, school-sized groups', g(93, 480, 250, 40), g(94, 500, 254, 42), 'two-sided', 0.95),
    ('scores-5000-4900', 'district-sized groups, integer scale scores', g(95, 5000, 250, 40, round=0), g(96, 4900, 252, 41, round=0), 'two-sided', 0.95),
    ('percent-correct', 'percent correct with one decimal', g(97, 33, 62, 12, round=1), g(98, 31, 68, 11, round=1), 'two-sided', 0.95),
    # extremes
    ('huge-t', 'means 10 SD apart (p far in the tail)', g(101, 40, 0, 1), g(102, 40, 10, 1), 'two-sided', 0.95),
    ('near-zero-t', 'almost identical means', [1.0, 2.0, 3.0, 4.0, 5.0, 6.0], [1.0, 2.0, 3.0, 4.0, 5.0, 6.001], 'two-sided', 0.95),
    ('constant-group', 'one group constant (Welch defined, Levene defined)', [5.0, 5.0, 5.0, 5.0], [4.0, 6.0, 5.5, 7.0, 3.5], 'two-sided', 0.95),
    ('tail-greater-extreme', 'one-sided greater far in the tail', g(103, 30, 5, 1), g(104, 30, 0, 1), 'greater', 0.95),
    ('mw-exact-8-10', 'Mann–Whitney exact boundary: 8 vs 10, no ties', g(105, 8, 0, 1), g(106, 10, 0.8, 1), 'two-sided', 0.95),
    ('mw-exact-5-400-less', 'Mann–Whitney exact with a large second group', g(107, 5, 0, 1), g(108, 400, 0.7, 1), 'less', 0.95),
]


def mw_method(a, b):
    ties = len(set(a + b)) < len(a) + len(b)
    return 'exact' if (not ties and min(len(a), len(b)) <= 8 and max(len(a), len(b)) <= 1000) else 'normal'


def two_sample_case(cid, description, spec_a, spec_b, alternative, confidence, notes):
    a = generate(spec_a)
    b = generate(spec_b)
    A = np.array(a)
    B = np.array(b)
    ea = Exact(a)
    eb = Exact(b)
    exp = {}

    # t tests
    for method, equal in (('welch', False), ('student', True)):
        res = stats.ttest_ind(A, B, equal_var=equal, alternative=alternative)
        diff = ea.mean - eb.mean
        if equal:
            df_e = Fraction(ea.n + eb.n - 2)
            pooled = (ea.m2 + eb.m2) / df_e
            se2 = pooled * (Fraction(1, ea.n) + Fraction(1, eb.n))
        else:
            va = ea.var / ea.n
            vb = eb.var / eb.n
            se2 = va + vb
            df_e = se2 * se2 / (va * va / (ea.n - 1) + vb * vb / (eb.n - 1)) if se2 > 0 else None
        if se2 == 0:
            exp[method] = None
            continue
        se = mp.sqrt(mpf(se2))
        t_e = mpf(diff) / se
        dfm = mpf(df_e)
        p_e = p_value(t_e, dfm, alternative)
        # SciPy's own df and se (ttest_ind does not return them in 1.10): the textbook formulas on its float64 moments
        va_s = A.var(ddof=1)
        vb_s = B.var(ddof=1)
        if equal:
            df_s = len(a) + len(b) - 2
            se_s = math.sqrt(((len(a) - 1) * va_s + (len(b) - 1) * vb_s) / df_s * (1 / len(a) + 1 / len(b)))
        else:
            se_s = math.sqrt(va_s / len(a) + vb_s / len(b))
            df_s = (va_s / len(a) + vb_s / len(b)) ** 2 / ((va_s / len(a)) ** 2 / (len(a) - 1) + (vb_s / len(b)) ** 2 / (len(b) - 1))
        md_s = A.mean() - B.mean()
        ci_s = interval(mp.mpf(md_s), mp.mpf(se_s), mp.mpf(df_s), confidence, alternative)
        ci_e = interval(mpf(diff), se, dfm, confidence, alternative)
        exp[method] = {
            't': pick(f'{cid} {method} t', res.statistic, t_e, REL_STAT, 0, notes),
            'df': pick(f'{cid} {method} df', df_s, dfm, REL_STAT, 0, notes),
            'p': pick(f'{cid} {method} p', res.pvalue, p_e, REL_P, ABS_P, notes),
            'meanDifference': pick(f'{cid} {method} meanDifference', md_s, diff, REL_STAT, 0, notes),
            'se': pick(f'{cid} {method} se', se_s, se, REL_STAT, 0, notes),
            'ci': pick_interval(f'{cid} {method} ci', ci_s, ci_e, notes),
        }

    # Levene, both centres
    exp['levene'] = {}
    for center in ('mean', 'median'):
        res = stats.levene(A, B, center=center)
        zs = []
        for ex, arr in ((ea, A), (eb, B)):
            # The exact median ((a + b)/2 in fractions for even n); SciPy rounds it to double, so offsets far from zero
            # make SciPy's W miss the exact one and the exact value becomes the reference.
            c = ex.mean if center == 'mean' else exact_median(ex.fx)
            ge = [v for v in ex.fx if v >= c]
            lt = [v for v in ex.fx if v < c]
            sz = (sum(ge, Fraction(0)) - c * len(ge)) - (sum(lt, Fraction(0)) - c * len(lt))
            sz2 = ex.s2 - 2 * c * ex.s1 + ex.n * c * c
            zs.append((ex.n, sz / ex.n, sz2 - sz * sz / ex.n))
        N = sum(z[0] for z in zs)
        zbar = sum(z[0] * z[1] for z in zs) / N
        between = sum(z[0] * (z[1] - zbar) ** 2 for z in zs)
        within = sum(z[2] for z in zs)
        if within == 0:
            exp['levene'][center] = None
            continue
        W = Fraction(N - 2, 1) * between / within
        p_e = f_sf(mpf(W), 1, N - 2)
        exp['levene'][center] = {
            'statistic': pick(f'{cid} levene {center} W', res.statistic, mpf(W), REL_STAT, 0, notes),
            'p': pick(f'{cid} levene {center} p', res.pvalue, p_e, REL_P, ABS_P, notes),
        }

    # variance ratio F (a constant group a gives F = 0, where P(F ≤ 0) = 0, so p = 0; a constant group b is undefined)
    if eb.var > 0:
        f_e = ea.var / eb.var
        d1 = ea.n - 1
        d2 = eb.n - 1
        p_e = mp.mpf(0) if f_e == 0 else min(mp.mpf(1), 2 * min(f_cdf(mpf(f_e), d1, d2), f_sf(mpf(f_e), d1, d2)))
        f_s = A.var(ddof=1) / B.var(ddof=1)
        p_s = min(1.0, 2 * min(stats.f.cdf(f_s, d1, d2), stats.f.sf(f_s, d1, d2)))
        exp['varianceRatio'] = {
            'f': pick(f'{cid} F', f_s, mpf(f_e), REL_STAT, 0, notes),
            'p': pick(f'{cid} F p', p_s, p_e, REL_P, ABS_P, notes),
        }
    else:
        exp['varianceRatio'] = None

    # Shapiro–Wilk (SciPy only; single precision)
    exp['shapiro'] = {}
    for name, arr in (('a', A), ('b', B)):
        if 3 <= len(arr) <= 5000 and np.ptp(arr) > 0:
            w, p = stats.shapiro(arr)
            wd, pd = shapiro_double(arr)
            # SciPy's single-precision W is good to ~1e-6 (setup-notes.md); its p follows from that W.
            assert abs(wd - w) < 1e-5, (cid, name, wd, w)
            assert abs(shapiro_p_from_w(float(w), len(arr)) - p) <= 5e-4 * p + 1e-6, (cid, name)
            exp['shapiro'][name] = {'w': float(w), 'p': float(p), 'wDouble': wd, 'pDouble': pd}
        else:
            exp['shapiro'][name] = None

    # Mann–Whitney
    method = mw_method(a, b)
    res = stats.mannwhitneyu(A, B, alternative=alternative, method='exact' if method == 'exact' else 'asymptotic')
    exp['mannWhitney'] = {'u': float(res.statistic), 'p': float(res.pvalue), 'method': method}

    # Hedges' g (formula with exact moments and mpmath gamma functions)
    m = ea.n + eb.n - 2
    pooled = (ea.m2 + eb.m2) / m
    if pooled > 0:
        sp = mp.sqrt(mpf(pooled))
        d = mpf(ea.mean - eb.mean) / sp
        mm = mp.mpf(m)
        j = mp.gamma(mm / 2) / (mp.sqrt(mm / 2) * mp.gamma((mm - 1) / 2))
        gg = j * d
        Nn = mp.mpf(ea.n + eb.n)
        se = mp.sqrt(Nn / (ea.n * eb.n) + gg * gg / (2 * Nn))
        z = mp.sqrt(2) * mp.erfinv(mp.mpf(confidence))
        omega = 1 - mp.mpf(3) / (4 * Nn - 9)
        exp['hedges'] = {
            'g': num(gg), 'd': num(d), 'j': num(j), 'se': num(se), 'ci': [num(gg - z * se), num(gg + z * se)],
            'gApproximate': num(omega * d), 'source': 'formula (Hedges 1981; Hedges & Olkin 1985) with exact moments, mpmath',
        }
    else:
        exp['hedges'] = None

    # describe (group a): NumPy percentiles; exact moments for mean, SD, skewness, kurtosis
    n = ea.n
    desc = {'q1': float(np.percentile(A, 25)), 'median': float(np.percentile(A, 50)), 'q3': float(np.percentile(A, 75)),
            'min': float(A.min()), 'max': float(A.max())}
    desc['mean'] = pick(f'{cid} describe mean', A.mean(), mpf(ea.mean), REL_STAT, 0, notes)
    desc['sd'] = pick(f'{cid} describe sd', A.std(ddof=1), mp.sqrt(mpf(ea.var)), REL_STAT, 0, notes)
    if ea.m2 > 0 and n <= 20000:
        m2 = ea.m2 / n
        m3 = ea.central(3)
        m4 = ea.central(4)
        g1 = mp.sqrt(n * (n - 1)) / (n - 2) * mpf(m3) / mpf(m2) ** mp.mpf(1.5) if n >= 3 else None
        g2 = mpf(Fraction(n - 1, (n - 2) * (n - 3)) * ((n + 1) * (m4 / (m2 * m2) - 3) + 6)) if n >= 4 else None
        desc['skewness'] = pick(f'{cid} skewness', stats.skew(A, bias=False), g1, 1e-9, 1e-12, notes) if g1 is not None else None
        desc['kurtosis'] = pick(f'{cid} kurtosis', stats.kurtosis(A, bias=False), g2, 1e-9, 1e-12, notes) if g2 is not None else None
    exp['describe'] = desc

    def store(spec):
        return spec if isinstance(spec, dict) else [float(v) for v in spec]

    return {'id': cid, 'description': description, 'a': store(spec_a), 'b': store(spec_b), 'alternative': alternative,
            'confidence': confidence, 'n1': len(a), 'n2': len(b), 'expected': exp}


# --- regression -------------------------------------------------------------------------------------------------
def solve_exact(M, v):
    k = len(v)
    A = [row[:] + [v[i]] for i, row in enumerate(M)]
    for c in range(k):
        piv = next(r for r in range(c, k) if A[r][c] != 0)
        A[c], A[piv] = A[piv], A[c]
        for r in range(k):
            if r != c and A[r][c] != 0:
                f = A[r][c] / A[c][c]
                A[r] = [A[r][j] - f * A[c][j] for j in range(k + 1)]
    return [A[i][k] / A[i][i] for i in range(k)]


def inverse_exact(M):
    k = len(M)
    cols = []
    for j in range(k):
        e = [Fraction(int(i == j)) for i in range(k)]
        cols.append(solve_exact(M, e))
    return [[cols[j][i] for j in range(k)] for i in range(k)]


def ols_case(cid, description, y, X, notes, arm_col=None):
    n = len(y)
    Xd = [[1.0] + list(row) for row in X]
    model = sm.OLS(np.array(y), np.array(Xd)).fit()
    Xf = [[F(v) for v in row] for row in Xd]
    yf = [F(v) for v in y]
    k = len(Xd[0])
    XtX = [[sum(Xf[i][a] * Xf[i][b] for i in range(n)) for b in range(k)] for a in range(k)]
    Xty = [sum(Xf[i][a] * yf[i] for i in range(n)) for a in range(k)]
    beta = solve_exact(XtX, Xty)
    resid = [yf[i] - sum(Xf[i][j] * beta[j] for j in range(k)) for i in range(n)]
    rss = sum(r * r for r in resid)
    ybar = sum(yf) / n
    tss = sum((v - ybar) ** 2 for v in yf)
    inv = inverse_exact(XtX)
    sigma2 = rss / (n - k)
    se = [mp.sqrt(mpf(sigma2 * inv[j][j])) for j in range(k)]
    tt = [mpf(beta[j]) / se[j] for j in range(k)]
    pp = [t_two_sided(tt[j], n - k) for j in range(k)]
    exp = {
        'coefficients': [pick(f'{cid} b{j}', model.params[j], mpf(beta[j]), REL_STAT, 1e-12, notes) for j in range(k)],
        'se': [pick(f'{cid} se{j}', model.bse[j], se[j], REL_STAT, 0, notes) for j in range(k)],
        't': [pick(f'{cid} t{j}', model.tvalues[j], tt[j], REL_STAT, 1e-12, notes) for j in range(k)],
        'p': [pick(f'{cid} p{j}', model.pvalues[j], pp[j], REL_P, ABS_P, notes) for j in range(k)],
        'r2': pick(f'{cid} r2', model.rsquared, 1 - mpf(rss) / mpf(tss), REL_STAT, 0, notes),
        'df': n - k,
    }
    return {'id': cid, 'description': description, 'y': y, 'X': X, 'expected': exp}


def regression_cases(notes):
    def normal(seed, n):
        return generate({'seed': seed, 'n': n})

    cases = []
    # ANCOVA with a pretest, n = 60
    n = 60
    pre = [250 + 40 * z for z in normal(201, n)]
    arm = [float(i % 2) for i in range(n)]
    noise = normal(202, n)
    post = [30 + 0.9 * pre[i] + 8 * arm[i] + 15 * noise[i] for i in range(n)]
    cases.append(ols_case('ancova-pretest-60', 'posttest on arm and pretest, n = 60', post, [[arm[i], pre[i]] for i in range(n)], notes))
    # ANCOVA, two covariates, unbalanced arms
    n = 200
    pre = [50 + 10 * z for z in normal(203, n)]
    age = [10 + (i % 7) * 0.5 for i in range(n)]
    arm = [1.0 if i % 4 == 0 else 0.0 for i in range(n)]
    noise = normal(204, n)
    post = [5 + 0.7 * pre[i] + 0.3 * age[i] + 2.5 * arm[i] + 6 * noise[i] for i in range(n)]
    cases.append(ols_case('ancova-two-covariates-200', 'arm, pretest and age; 50 vs 150', post,
                          [[arm[i], pre[i], age[i]] for i in range(n)], notes))
    # no covariate: the arm coefficient is the mean difference and its t is Student's t
    n = 40
    arm = [1.0 if i < 18 else 0.0 for i in range(n)]
    y = [100 + 15 * z + 6 * arm[i] for i, z in enumerate(normal(205, n))]
    cases.append(ols_case('ancova-no-covariate-40', 'arm only (Student t identity), 18 vs 22', y, [[arm[i]] for i in range(n)], notes))
    # scale scores near 1000 (centring matters)
    n = 80
    pre = [1000 + 30 * z for z in normal(206, n)]
    arm = [float(i % 2) for i in range(n)]
    y = [1000 + 0.8 * (pre[i] - 1000) + 5 * arm[i] + 10 * z for i, z in enumerate(normal(207, n))]
    cases.append(ols_case('ancova-scores-near-1000', 'scale scores near 1000', y, [[arm[i], pre[i]] for i in range(n)], notes))
    # general OLS, three predictors
    n = 100
    x1 = normal(208, n)
    x2 = [v * v for v in normal(209, n)]
    x3 = [float(i % 5) for i in range(n)]
    y = [1 + 2 * x1[i] - 0.5 * x2[i] + 0.25 * x3[i] + z for i, z in enumerate(normal(210, n))]
    cases.append(ols_case('ols-three-predictors-100', 'three predictors', y, [[x1[i], x2[i], x3[i]] for i in range(n)], notes))
    return cases


# --- distributions, noncentral t, power ------------------------------------------------------------------------
def distribution_points():
    t_points = [(2.0, 10), (12.62059, 326), (-12.9463, 136.87), (0.1, 200000), (3.0, 200000), (40, 3), (1e-5, 5), (8.0, 1.5),
                (25.0, 100000), (5.0, 2e6), (1.0, 1e9), (-3.5, 7.25), (60.0, 40), (-200.0, 30), (0.7, 1), (2.5, 2)]
    normal_points = [0, 0.5, 1, 1.4, 1.96, 2, 3, 5, 8.5, 10, 20, 37, -0.3, -3, -9]
    f_points = [(1.70591, 9, 90), (1.123037, 239, 239), (9.59, 2, 12), (3.5, 1, 2e6), (0.2, 5, 7), (40.0, 3, 30)]
    chi_points = [(3.84, 1), (8.666666666666666, 4), (150.0, 100), (0.5, 10), (1000.0, 900)]
    t_quantiles = [(0.975, 326), (0.975, 3), (0.8, 10), (0.999999, 5), (0.975, 1.2), (0.6, 2e5), (0.975, 1), (0.975, 2),
                   (0.95, 136.87), (0.025, 40), (1e-10, 12), (0.995, 1e7)]
    normal_quantiles = [1e-300, 1e-20, 1e-5, 0.001, 0.025, 0.3, 0.5, 0.8, 0.975, 0.999999]
    return {
        'source': 'mpmath at 50 digits (incomplete beta by continued fraction, checked against mpmath.betainc; ncdf, gammainc, findroot)',
        'tSf': [[t, df, num(t_sf(t, df))] for t, df in t_points],
        'normalSf': [[z, num(mp.ncdf(-z))] for z in normal_points],
        'fSf': [[f, a, b, num(f_sf(f, a, b))] for f, a, b in f_points],
        'chiSquareSf': [[x, k, num(mp.gammainc(mp.mpf(k) / 2, mp.mpf(x) / 2, mp.inf, regularized=True))] for x, k in chi_points],
        'tQuantile': [[p, df, num(t_quantile(p, df))] for p, df in t_quantiles],
        'normalQuantile': [[p, num(mp.findroot(lambda x: mp.ncdf(x) - mp.mpf(p), float(stats.norm.ppf(p))))] for p in normal_quantiles],
        'logGamma': [[x, num(mp.loggamma(x))] for x in [0.5, 1e-10, 1, 2, 3.7, 9.99, 14.9, 15, 100, 1e5, 1e8]],
    }


def nct_points():
    pts = [(2.0, 10, 1.0), (1.96, 98, 2.8), (2.0, 30, -1.0), (-1.0, 20, 0.5), (3.0, 200, 5.0), (1.97, 1000, 12.0), (0.5, 4, 3.0),
           (2.01, 58, 2.6), (-2.01, 58, 2.6), (1.6, 500, 0.0), (1.0, 3, 8.0), (4.0, 15, 2.0), (2.5, 1e5, 2.5)]
    return [{'t': t, 'df': df, 'nc': nc, 'cdf': float(stats.nct.cdf(t, df, nc)), 'sf': float(stats.nct.sf(t, df, nc))} for t, df, nc in pts]


def power_cases():
    designs = [
        {'design': 'individual', 'n': 400},
        {'design': 'individual', 'n': 128, 'p': 0.5, 'r2': 0.5, 'covariates': 1},
        {'design': 'individual', 'n': 60, 'p': 0.3, 'alpha': 0.1, 'power': 0.9, 'alternative': 'one-sided'},
        {'design': 'cluster', 'clusters': 40, 'clusterSize': 25, 'icc': 0.2},
        {'design': 'cluster', 'clusters': 20, 'clusterSize': 22, 'icc': 0.15, 'r2Level1': 0.5, 'r2Level2': 0.6, 'covariates': 1},
        {'design': 'cluster', 'clusters': 12, 'clusterSize': 30, 'icc': 0.1, 'p': 0.5, 'alpha': 0.05, 'power': 0.8, 'alternative': 'one-sided'},
        {'design': 'individual', 'n': 100000},
    ]
    out = []
    for d in designs:
        p = d.get('p', 0.5)
        alpha = d.get('alpha', 0.05)
        pw = d.get('power', 0.8)
        two = d.get('alternative', 'two-sided') == 'two-sided'
        if d['design'] == 'individual':
            df = d['n'] - d.get('covariates', 0) - 2
            se = mp.sqrt((1 - mp.mpf(d.get('r2', 0))) / (mp.mpf(p) * (1 - p) * d['n']))
        else:
            df = d['clusters'] - d.get('covariates', 0) - 2
            icc = mp.mpf(d['icc'])
            pq = mp.mpf(p) * (1 - p)
            se = mp.sqrt(icc * (1 - mp.mpf(d.get('r2Level2', 0))) / (pq * d['clusters'])
                         + (1 - icc) * (1 - mp.mpf(d.get('r2Level1', 0))) / (pq * d['clusters'] * d['clusterSize']))
        t_a = t_quantile(1 - mp.mpf(alpha) / 2 if two else 1 - mp.mpf(alpha), df)
        t_p = t_quantile(pw, df)
        mdes_value = (t_a + t_p) * se
        # power at a fixed effect size, from SciPy's noncentral t (Boost)
        es = 0.25
        delta = float(es / se)
        crit = float(t_a)
        power_value = float(stats.nct.sf(crit, df, delta) + (stats.nct.cdf(-crit, df, delta) if two else 0.0))
        # and the power at the MDES itself (close to, not exactly, the target: the multiplier is an approximation)
        at_mdes = float(stats.nct.sf(crit, df, float((t_a + t_p))) + (stats.nct.cdf(-crit, df, float(t_a + t_p)) if two else 0.0))
        out.append({'input': d, 'expected': {'mdes': num(mdes_value), 'multiplier': num(t_a + t_p), 'df': df, 'standardError': num(se),
                                             'effectSize': es, 'power': power_value, 'powerAtMdes': at_mdes},
                    'source': 'multiplier from mpmath t quantiles; power from SciPy nct (Boost)'})
    return out


def meta_cases():
    sets = [
        ('five-sites', [0.10, 0.30, 0.20, 0.50, -0.10], [0.010, 0.020, 0.015, 0.030, 0.020]),
        ('homogeneous', [0.21, 0.19, 0.20, 0.22], [0.02, 0.03, 0.025, 0.02]),
        ('eight-sites-heterogeneous', [0.05, 0.42, -0.12, 0.31, 0.18, 0.65, 0.02, 0.27], [0.012, 0.03, 0.02, 0.05, 0.01, 0.04, 0.015, 0.022]),
    ]
    out = []
    for name, y, v in sets:
        r = combine_effects(np.array(y), np.array(v), method_re='dl')
        ci = r.conf_int(alpha=0.05)
        q = float(r.q)
        df = len(y) - 1
        fixed = {'estimate': float(r.mean_effect_fe), 'se': float(r.sd_eff_w_fe), 'ci': [float(ci[0][0]), float(ci[0][1])]}
        random = {'estimate': float(r.mean_effect_re), 'se': float(r.sd_eff_w_re), 'ci': [float(ci[1][0]), float(ci[1][1])],
                  'tau2': float(r.tau2)}
        note = None
        if r.tau2 < 0:
            # statsmodels 0.13.5 leaves the DL moment estimate negative when Q < k − 1; DerSimonian & Laird (1986)
            # truncate it at 0, which makes the random-effects result the fixed-effect one.
            note = f'statsmodels tau2 = {float(r.tau2)!r} (not truncated); expected values use tau2 = 0'
            random = dict(fixed, tau2=0.0)
        out.append({'id': name, 'estimates': [{'y': a, 'v': b} for a, b in zip(y, v)], 'note': note, 'expected': {
            'fixed': fixed, 'random': random,
            'q': q, 'i2': max(0.0, float(r.i2)), 'pQ': float(stats.chi2.sf(q, df))}})
    return out


def bh_cases():
    sets = [
        ('mixed', [0.001, 0.008, 0.039, 0.041, 0.042, 0.06, 0.074, 0.205, 0.212, 0.216], 0.05),
        ('ties-and-order', [0.04, 0.01, 0.04, 0.2, 0.03, 0.5], 0.05),
        ('none-rejected', [0.2, 0.35, 0.6, 0.04], 0.05),
        ('q10', [0.015, 0.09, 0.02, 0.11, 0.3], 0.10),
    ]
    out = []
    for name, p, q in sets:
        rej, adj, _, _ = multipletests(p, alpha=q, method='fdr_bh')
        out.append({'id': name, 'p': p, 'q': q, 'expected': {'adjusted': [float(v) for v in adj], 'rejected': [bool(v) for v in rej]}})
    return out


def icc_cases(notes):
    out = []
    for name, specs in (
        ('six-classrooms', [g(301 + i, 18 + 3 * i, 250 + 12 * ((i * 7) % 5), 35) for i in range(6)]),
        ('equal-sizes', [g(311 + i, 20, 50 + (i % 3) * 4, 10) for i in range(8)]),
        ('small-icc', [g(321 + i, 25, 100 + 0.5 * i, 15) for i in range(5)]),
    ):
        groups = [generate(s) for s in specs]
        ex = [Exact(x) for x in groups]
        N = sum(e.n for e in ex)
        k = len(ex)
        grand = sum(e.s1 for e in ex) / N
        ssb = sum(e.n * (e.mean - grand) ** 2 for e in ex)
        ssw = sum(e.m2 for e in ex)
        msb = ssb / (k - 1)
        msw = ssw / (N - k)
        n0 = (N - Fraction(sum(e.n * e.n for e in ex), N)) / (k - 1)
        icc = (msb - msw) / (msb + (n0 - 1) * msw)
        out.append({'id': name, 'groups': specs, 'expected': {'icc': num(mpf(icc)), 'msBetween': num(mpf(msb)), 'msWithin': num(mpf(msw)),
                                                              'n0': num(mpf(n0))},
                    'source': 'ANOVA estimator (Fisher 1925; Donner 1986) in exact rational arithmetic'})
    return out


def self_check():
    """The continued fraction agrees with mpmath's own betainc where the latter converges."""
    for a, b, x in ((5, 0.5, 0.3), (0.5, 163, 0.9), (4.5, 45, 0.08), (120, 0.5, 0.995), (2, 3, 0.999)):
        ref = mp.betainc(a, b, 0, x, regularized=True)
        assert abs(betainc_cf(a, b, x) - ref) <= mp.mpf(10) ** -40 * ref, (a, b, x)


def main():
    self_check()
    notes = []
    two = [two_sample_case(*c, notes) for c in CASES]
    fixture = {
        'generatedBy': 'packages/stats/scripts/make-fixtures.py',
        'versions': {'python': sys.version.split()[0], 'scipy': scipy.__version__, 'numpy': np.__version__,
                     'statsmodels': statsmodels.__version__, 'mpmath': mp.__version__},
        'generator': 'Park–Miller LCG (48271, 2^31 − 1); normal = Irwin–Hall sum of 12 uniforms − 6; skewed = its square; '
                     'heavy = u1/(u2 + 0.05); x = mean + sd·z, optionally floor(x·10^r + 0.5)/10^r',
        'tolerances': {'statistic': REL_STAT, 'pRelative': REL_P, 'pAbsolute': ABS_P},
        'scipyMissedExact': notes,
        'twoSample': two,
        'regression': regression_cases(notes),
        'distributions': distribution_points(),
        'noncentralT': nct_points(),
        'power': power_cases(),
        'meta': meta_cases(),
        'benjaminiHochberg': bh_cases(),
        'icc': icc_cases(notes),
    }
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, 'w') as fh:
        json.dump(fixture, fh, indent=1)
        fh.write('\n')
    print(f'wrote {OUT}: {len(two)} two-sample cases, {len(fixture["regression"])} regression cases; '
          f'{len(notes)} values where SciPy missed the exact value:')
    for n in notes:
        print('  ', n)


if __name__ == '__main__':
    main()
