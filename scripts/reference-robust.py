# Reference figures from SciPy for the robust-loss tests of Curvewright (models[].loss).
# Run:  python3 scripts/reference-robust.py > test/fixtures/reference/scipy-robust.json
# The output is committed; the tests read it, so CI never needs SciPy. Datasets: the stack-loss data of Brownlee
# (1965), as R's datasets::stackloss (test/fixtures/stackloss.csv), and the treated rows of the Puromycin data
# (Treloar 1974; R's datasets::Puromycin; test/fixtures/puromycin.csv).
# Objective: scipy.optimize.least_squares minimises 0.5·Σ f_scale²·ρ((r/f_scale)²) with the same ρ as Curvewright,
# so the threshold t = f_scale is set the same way: t = c·1.4826·median|r_i/√(1−h_i)| (c = 1.345 huber/soft_l1,
# 2.385 cauchy), r the least-squares residuals and h their hat values (studentized), or a given t. The sandwich SE is computed here independently from the formulas
# (HC1-scaled A⁻¹BA⁻¹, ψ = ρ'(z)·r, ψ' = ρ'(z) + 2zρ''(z)) at SciPy's solution, with SciPy's finite-difference-free
# analytic Jacobian below.
import csv, json, os, sys
import numpy as np
import scipy
from scipy.optimize import least_squares

HERE = os.path.dirname(os.path.abspath(__file__))
FIX = os.path.join(HERE, '..', 'test', 'fixtures')
TUNING = {'huber': 1.345, 'soft_l1': 1.345, 'cauchy': 2.385}
MAD = 1.482602218505602


def rho(loss, z):
    if loss == 'huber':
        return (np.where(z <= 1, 1.0, 1 / np.sqrt(np.maximum(z, 1))), np.where(z <= 1, 0.0, -0.5 * np.maximum(z, 1) ** -1.5))
    if loss == 'soft_l1':
        return (1 / np.sqrt(1 + z), -0.5 * (1 + z) ** -1.5)
    return (1 / (1 + z), -1 / (1 + z) ** 2)


def studentized_scale(J, r):
    Q, _ = np.linalg.qr(J)
    h = np.sum(Q * Q, axis=1)
    return MAD * np.median(np.abs(r / np.sqrt(1 - h)))


def robust(fun, jac, theta_ls, loss, t, bounds=(-np.inf, np.inf)):
    sol = least_squares(fun, theta_ls, jac=jac, loss=loss, f_scale=t, method='trf', bounds=bounds,
                        xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=100000)
    r = fun(sol.x)
    J = jac(sol.x)  # dr/dθ = −df/dθ; signs cancel in A and B
    z = (r / t) ** 2
    d1, d2 = rho(loss, z)
    psi = d1 * r
    dpsi = d1 + 2 * z * d2
    n, p = J.shape
    free = [j for j in range(p) if not (sol.active_mask[j] != 0)]
    Jf = J[:, free]
    A = (Jf * dpsi[:, None]).T @ Jf
    B = (Jf * (psi ** 2)[:, None]).T @ Jf
    Ai = np.linalg.inv(A)
    C = n / (n - len(free)) * Ai @ B @ Ai
    se = [None] * p
    for k, j in enumerate(free):
        se[j] = float(np.sqrt(C[k, k]))
    return {'theta': [float(v) for v in sol.x], 'se': se, 'threshold': float(t), 'objective': float(2 * sol.cost),
            'weights': [float(v) for v in d1], 'status': int(sol.status)}


out = {'source': f'SciPy {scipy.__version__} scipy.optimize.least_squares (trf, xtol=ftol=gtol=1e-15), NumPy {np.__version__}'}

# ---------------------------------------------------------------- stack loss (Brownlee 1965), linear in 4 parameters
rows = list(csv.DictReader(open(os.path.join(FIX, 'stackloss.csv'))))
X = np.array([[1.0, float(r['air_flow']), float(r['water_temp']), float(r['acid_conc'])] for r in rows])
y = np.array([float(r['stack_loss']) for r in rows])
fun = lambda th: X @ th - y
jac = lambda th: X
th_ls = np.linalg.lstsq(X, y, rcond=None)[0]
s = studentized_scale(X, X @ th_ls - y)
out['stackloss'] = {'params': ['b0', 'b1', 'b2', 'b3'], 'ls': [float(v) for v in th_ls], 'scale': float(s)}
for loss in TUNING:
    out['stackloss'][loss] = robust(fun, jac, th_ls, loss, TUNING[loss] * s)

# ---------------------------------------------------------------- Puromycin treated (Treloar 1974), Michaelis–Menten
rows = [r for r in csv.DictReader(open(os.path.join(FIX, 'puromycin.csv'))) if r['state'] == 'treated']
x = np.array([float(r['conc']) for r in rows])
y = np.array([float(r['rate']) for r in rows])
fun = lambda th: th[0] * x / (th[1] + x) - y
jac = lambda th: np.column_stack([x / (th[1] + x), -th[0] * x / (th[1] + x) ** 2])
ls = least_squares(fun, [200.0, 0.1], jac=jac, method='trf', xtol=1e-15, ftol=1e-15, gtol=1e-15)
s = studentized_scale(jac(ls.x), fun(ls.x))
out['puromycin'] = {'params': ['Vm', 'K'], 'ls': [float(v) for v in ls.x], 'scale': float(s)}
for loss in TUNING:
    out['puromycin'][loss] = robust(fun, jac, ls.x, loss, TUNING[loss] * s)
# a given threshold (lossScale 5) and an active bound (Vm ≤ 205)
out['puromycin']['cauchy_t5'] = robust(fun, jac, ls.x, 'cauchy', 5.0)
# (the scale from the least-squares fit under the same bound, as the spec's fit has it)
bnd = ([-np.inf, -np.inf], [205.0, np.inf])
lsb = least_squares(fun, [200.0, 0.1], jac=jac, method='trf', bounds=bnd, xtol=1e-15, ftol=1e-15, gtol=1e-15)
sb = studentized_scale(jac(lsb.x), fun(lsb.x))
out['puromycin']['huber_bound'] = robust(fun, jac, lsb.x, 'huber', TUNING['huber'] * sb, bounds=bnd)

json.dump(out, sys.stdout, indent=1)
print()
