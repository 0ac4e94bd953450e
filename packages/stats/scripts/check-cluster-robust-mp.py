"""High-precision CR2 reference for cases of test/fixtures/cluster-robust.json, straight from the definitions.

    /usr/bin/python3 packages/stats/scripts/check-cluster-robust-mp.py

Reads the rows that make-cluster-robust-fixtures.R wrote (their decimal text, so the data are exact), and with mpmath
at 50 significant digits (Debian's python3-mpmath) builds the full design X (intercept, arm, block indicators with the
first sorted block as reference, covariates), M = (X'X)^-1, the residuals e, and for every unit
A_j = (I - X_j M X_j')^(-1/2) from the eigen-decomposition of the n_j x n_j matrix (eigenvalues <= 1e-12 give 0, the
generalised inverse square root that R's clubSandwich uses). Then
    V = sum_j (c'M X_j' A_j e_j)^2                           (Bell & McCaffrey 2002)
    g_j = (I - H)[:, j] A_j X_j M c  as N-vectors (H = X M X'), P_ij = g_i'g_j,
    df = (sum_j P_jj)^2 / sum_ij P_ij^2                      (Pustejovsky & Tipton 2018, working model I)
with no algebraic shortcut. Writes test/fixtures/cluster-robust-mp.json. It settles where clubSandwich's float64
pipeline and the engine disagree: scores offset by 1e6, where clubSandwich inverts X'X of the uncentred design.
"""
import json
import os
import sys
from decimal import Decimal

import mpmath
from mpmath import mp, mpf

mp.dps = 50
HERE = os.path.dirname(os.path.abspath(__file__))
FIXTURES = os.path.join(HERE, '..', 'test', 'fixtures')
CASES = ['unbalanced-pretest', 'offset-1e6', 'blocks-single-student-unit', 'units-of-size-one', 'unit-level-covariate']


def mp_number(x):
    # json parses numbers as Decimal (parse_float below), so the decimal text the R script wrote is kept exactly.
    return mpf(str(x))


def design(rows):
    y = [mp_number(v) for v in rows['y']]
    arm = [mp_number(v) for v in rows['arm']]
    N = len(y)
    cols = [[mpf(1)] * N, arm]
    block = rows.get('block')
    if block:
        labels = sorted(set(block))
        for label in labels[1:]:
            cols.append([mpf(1) if b == label else mpf(0) for b in block])
    for cov in rows.get('covariates') or []:
        cols.append([mp_number(v) for v in cov])
    X = mp.matrix(N, len(cols))
    for j, col in enumerate(cols):
        for i in range(N):
            X[i, j] = col[i]
    return X, mp.matrix(y)


def cr2(rows):
    X, y = design(rows)
    N, p = X.rows, X.cols
    Xt = X.T
    M = mp.inverse(Xt * X)
    beta = M * (Xt * y)
    e = y - X * beta
    c = mp.matrix(p, 1)
    c[1] = 1
    Mc = M * c
    units = {}
    for i, u in enumerate(rows['cluster']):
        units.setdefault(u, []).append(i)
    variance = mpf(0)
    g_vectors = []
    singular_units = 0
    for members in units.values():
        nj = len(members)
        Xj = mp.matrix(nj, p)
        for r, i in enumerate(members):
            for k in range(p):
                Xj[r, k] = X[i, k]
        IH = mp.eye(nj) - Xj * M * Xj.T
        IH = (IH + IH.T) / 2
        vals, vecs = mp.eigsy(IH)
        A = mp.matrix(nj, nj)
        singular = False
        for t in range(nj):
            if vals[t] > mpf('1e-12'):
                f = 1 / mp.sqrt(vals[t])
            else:
                f = mpf(0)
                singular = True
            for a in range(nj):
                for b in range(nj):
                    A[a, b] += vecs[a, t] * f * vecs[b, t]
        singular_units += singular
        a_j = A * (Xj * Mc)
        ej = mp.matrix([e[i] for i in members])
        variance += (a_j.T * ej)[0] ** 2
        # g_j = (I - H)[:, j] a_j = E_j a_j - X M X_j' a_j.
        g = -(X * (M * (Xj.T * a_j)))
        for r, i in enumerate(members):
            g[i] += a_j[r]
        g_vectors.append(g)
    J = len(g_vectors)
    P = [[(g_vectors[i].T * g_vectors[j])[0] for j in range(J)] for i in range(J)]
    trace = sum(P[j][j] for j in range(J))
    squares = sum(P[i][j] ** 2 for i in range(J) for j in range(J))
    rss = sum(v ** 2 for v in e)
    return {
        'estimate': beta[1],
        'se': mp.sqrt(variance),
        'df': trace ** 2 / squares,
        'olsSe': mp.sqrt(rss / (N - p) * M[1, 1]),
        'singularUnits': singular_units,
    }


def main():
    with open(os.path.join(FIXTURES, 'cluster-robust.json')) as f:
        fixture = json.load(f, parse_float=Decimal, parse_int=Decimal)
    by_id = {c['id']: c for c in fixture['cases']}
    out = []
    for case_id in CASES:
        res = cr2(by_id[case_id]['rows'])
        t = res['estimate'] / res['se']
        # Two-sided p of t on df (regularised incomplete beta: P(|T| > t) = I_{df/(df+t^2)}(df/2, 1/2)).
        df = res['df']
        p = mpmath.betainc(df / 2, mpf(1) / 2, 0, df / (df + t * t), regularized=True)
        entry = {'id': case_id}
        for key in ('estimate', 'se', 'df', 'olsSe'):
            entry[key] = float(res[key])
        entry['t'] = float(t)
        entry['p'] = float(p)
        entry['singularUnits'] = res['singularUnits']
        out.append(entry)
        ref = by_id[case_id]['expected']
        print(f"{case_id:28s} se {mpmath.nstr(res['se'], 17)} (R {ref['se']}), df {mpmath.nstr(df, 17)} (R {ref['df']})",
              file=sys.stderr)
    doc = {
        'generatedBy': 'packages/stats/scripts/check-cluster-robust-mp.py',
        'versions': {'python': sys.version.split()[0], 'mpmath': mpmath.__version__, 'digits': mp.dps},
        'cases': out,
    }
    with open(os.path.join(FIXTURES, 'cluster-robust-mp.json'), 'w') as f:
        json.dump(doc, f, indent=1)
        f.write('\n')


if __name__ == '__main__':
    main()
