#!/usr/bin/python3
"""High-precision reference for the two-level model: solves the REML problem of every case in
packages/stats/test/fixtures/two-level.json at 50 significant digits with mpmath and writes the results into the
fixture beside lme4's (key "highPrecision"). Run after make-two-level-fixtures.R, from the repository root:

    /usr/bin/python3 packages/stats/scripts/two-level-high-precision.py

Written from the definitions, independently of the TypeScript engine (which uses analytic derivatives):
- random-intercept model y_j = X_j beta + u_j 1 + e_j, V_j = sigma^2 (I + lambda 11'), lambda = tau^2/sigma^2;
  V_j^-1 = sigma^-2 (I - gamma_j 11'), gamma_j = lambda/(1 + n_j lambda) (standards.md);
- REML deviance with sigma^2 profiled out, as lme4 (Bates et al. 2015, eq. 42):
  (N - p)[1 + log(2 pi R/(N - p))] + sum log(1 + n_j lambda) + log|X'H^-1 X|, R = y'H^-1 y - b'A^-1 b;
- the optimum: the lowest of a grid in lambda (1e-8 to 1e8), refined to the root of the numerical derivative
  (mpmath.diff); lambda = 0 when the deviance rises from 0 and the boundary is lower than that root;
- Satterthwaite df as lmerTest 3.1-3 computes it: variance parameters (theta = tau/sigma, sigma), Hessian of the
  unprofiled REML deviance and gradient of sigma^2 (A^-1)_arm,arm by numerical differentiation at 50 digits,
  df = 2 f^2 / (g' 2H^-1 g) (Giesbrecht & Burns 1985; Kuznetsova et al. 2017);
- p and the 95 % interval from the t distribution via the regularised incomplete beta function.
The data are the doubles in the fixture, converted exactly to mpf.
"""
import json
import pathlib

import mpmath as mp

mp.mp.dps = 50
FIXTURE = pathlib.Path('packages/stats/test/fixtures/two-level.json')


class Case:
    def __init__(self, c):
        y = [mp.mpf(v) for v in c['y']]
        covs = [[mp.mpf(v) for v in col] for col in c['covariates']]
        blocks = c.get('block')
        labels = sorted(set(blocks)) if blocks else []
        self.k = len(covs)
        # Columns as lme4's model matrix: intercept, arm, covariates, block indicators (first label the reference).
        self.names = ['(Intercept)', 'arm'] + c['covariateNames'] + ['block' + b for b in labels[1:]]
        self.p = len(self.names)
        rows = {}
        for i, u in enumerate(c['unit']):
            rows.setdefault(u, []).append(i)
        self.N = len(y)
        p = self.p
        zero = lambda: [[mp.mpf(0)] * p for _ in range(p)]
        self.W = zero()  # within-unit cross-products of X
        self.wy = [mp.mpf(0)] * p
        self.wyy = mp.mpf(0)
        self.units = []  # (n, mean row of X as a dict col -> value, mean y)
        for u, idx in rows.items():
            n = len(idx)
            xbar = {0: mp.mpf(1)}
            if c['arm'][idx[0]] == 1:
                xbar[1] = mp.mpf(1)
            means = [mp.fsum(col[i] for i in idx) / n for col in covs]
            for k in range(self.k):
                xbar[2 + k] = means[k]
            if blocks and blocks[idx[0]] != labels[0]:
                xbar[2 + self.k + labels.index(blocks[idx[0]]) - 1] = mp.mpf(1)
            ybar = mp.fsum(y[i] for i in idx) / n
            for i in idx:
                dy = y[i] - ybar
                dx = [covs[k][i] - means[k] for k in range(self.k)]
                self.wyy += dy * dy
                for a in range(self.k):
                    self.wy[2 + a] += dx[a] * dy
                    for b in range(self.k):
                        self.W[2 + a][2 + b] += dx[a] * dx[b]
            self.units.append((n, xbar, ybar))

    def system(self, lam):
        p = self.p
        A = [row[:] for row in self.W]
        b = self.wy[:]
        q = self.wyy
        logdet_h = mp.mpf(0)
        for n, xbar, ybar in self.units:
            w = n / (1 + n * lam)
            logdet_h += mp.log(1 + n * lam)
            for i, xi in xbar.items():
                b[i] += w * xi * ybar
                for j, xj in xbar.items():
                    A[i][j] += w * xi * xj
            q += w * ybar * ybar
        return mp.matrix(A), mp.matrix(b), q, logdet_h

    def profiled(self, lam):
        A, b, q, logdet_h = self.system(lam)
        beta = mp.lu_solve(A, b)
        R = q - (b.T * beta)[0]
        dfr = self.N - self.p
        dev = dfr * (1 + mp.log(2 * mp.pi * R / dfr)) + logdet_h + mp.log(mp.det(A))
        return dev, beta, R, A

    def unprofiled(self, theta, sigma):
        """REML deviance in lmerTest's parameters (theta, sigma)."""
        lam = theta * theta
        A, b, q, logdet_h = self.system(lam)
        beta = mp.lu_solve(A, b)
        R = q - (b.T * beta)[0]
        s2 = sigma * sigma
        return (self.N - self.p) * mp.log(2 * mp.pi * s2) + logdet_h + mp.log(mp.det(A)) + R / s2

    def arm_variance(self, theta, sigma):
        A, _, _, _ = self.system(theta * theta)
        e = mp.matrix([1 if i == 1 else 0 for i in range(self.p)])
        return sigma * sigma * mp.lu_solve(A, e)[1]


def t_sf(t, df):
    x = df / (df + t * t)
    half = mp.betainc(df / 2, mp.mpf(1) / 2, 0, x, regularized=True) / 2
    return half if t > 0 else 1 - half


def t_quantile(prob, df):
    return mp.findroot(lambda t: (1 - t_sf(t, df)) - prob, mp.mpf(2))


def solve(c):
    case = Case(c)
    dev = lambda lam: case.profiled(lam)[0]
    # The deviance can have a local minimum at lambda = 0 and a lower one inside (large-icc does): search globally,
    # on a grid of lambda from 1e-8 to 1e8, then refine the best interior point by a root of the derivative.
    grid = [mp.mpf(10) ** (e / mp.mpf(4)) for e in range(-32, 33)]
    best = min(grid, key=dev)
    local_at_zero = mp.diff(dev, mp.mpf(0)) >= 0
    if best == grid[0] and local_at_zero:
        boundary, lam = True, mp.mpf(0)
    else:
        i = grid.index(best)
        lo = grid[i - 1] if i > 0 else mp.mpf(0)
        slope = lambda l: mp.diff(dev, l)
        assert slope(lo) < 0 < slope(grid[i + 1]), (c['id'], 'the grid does not bracket the minimum')
        lam = mp.findroot(slope, (lo, grid[i + 1]), solver='anderson', tol=mp.mpf(10) ** -40)
        assert all(dev(lam) < dev(other) for other in (lam * mp.mpf('0.9'), lam * mp.mpf('1.1'))), (c['id'], 'not a minimum')
        boundary = local_at_zero and dev(mp.mpf(0)) <= dev(lam)
        if boundary:
            lam = mp.mpf(0)
    d, beta, R, A = case.profiled(lam)
    dfr = case.N - case.p
    s2 = R / dfr
    theta, sigma = mp.sqrt(lam), mp.sqrt(s2)
    f = case.arm_variance(theta, sigma)
    g = [mp.diff(lambda th: case.arm_variance(th, sigma), theta),
         mp.diff(lambda sg: case.arm_variance(theta, sg), sigma)]
    H = mp.matrix(2, 2)
    H[0, 0] = mp.diff(lambda th: case.unprofiled(th, sigma), theta, 2)
    H[1, 1] = mp.diff(lambda sg: case.unprofiled(theta, sg), sigma, 2)
    H[0, 1] = H[1, 0] = mp.diff(lambda th, sg: case.unprofiled(th, sg), (theta, sigma), (1, 1))
    acov = 2 * mp.inverse(H)
    denom = g[0] * (acov[0, 0] * g[0] + acov[0, 1] * g[1]) + g[1] * (acov[1, 0] * g[0] + acov[1, 1] * g[1])
    df = 2 * f * f / denom
    ainv = mp.inverse(A)
    est = beta[1]
    se = mp.sqrt(s2 * ainv[1, 1])
    t = est / se
    p = 2 * t_sf(abs(t), df)
    q = t_quantile(mp.mpf('0.975'), df)
    covs = [{'name': c['covariateNames'][k], 'estimate': float(beta[2 + k]), 'se': float(mp.sqrt(s2 * ainv[2 + k, 2 + k]))}
            for k in range(case.k)]
    return {
        'boundary': bool(boundary),
        # True when tau^2 = 0 is a local optimum of the likelihood (the answer only when it is also the global one).
        'localOptimumAtZero': bool(local_at_zero),
        'lambda': float(lam),
        'estimate': float(est),
        'se': float(se),
        'df': float(df),
        't': float(t),
        'p': float(p),
        'ci95': [float(est - q * se), float(est + q * se)],
        'tau2': float(lam * s2),
        'sigma2': float(s2),
        'remlLogLik': float(-d / 2),
        'covariateCoefficients': covs,
    }


def main():
    fx = json.loads(FIXTURE.read_text())
    for c in fx['cases']:
        c['highPrecision'] = solve(c)
        h, r = c['highPrecision'], c['lme4']
        print(f"{c['id']:28s} df {h['df']:.10g} (lme4 {r['df']:.10g})  tau2 {h['tau2']:.10g} (lme4 {r['tau2']:.10g})")
    fx['versions']['highPrecision'] = (
        f'mpmath {mp.__version__} at {mp.mp.dps} digits: packages/stats/scripts/two-level-high-precision.py '
        '(REML optimum from the numerical derivative of the profiled deviance; Satterthwaite df from numerical '
        'derivatives in (theta, sigma) as lmerTest)')
    FIXTURE.write_text(json.dumps(fx, separators=(',', ':')) + '\n')


if __name__ == '__main__':
    main()
