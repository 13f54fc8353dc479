# Peer of bench/solve-speed.ts: SciPy least_squares(method='lm') (MINPACK lmder) with the analytic Jacobian, on the
# same seeded CSV files and from the same starts. Reads a JSON job list on stdin, prints one JSON result per job.
# Times are the median CPU time (time.process_time) of `repeats` runs of the solve alone, after one untimed warm-up (the CSV is read once, outside the timing).
import json, sys, time
import numpy as np
from scipy.optimize import least_squares


def model(name):
    if name == 'exp_decay':  # A*exp(k*x)
        def f(t, x):
            return t[0] * np.exp(t[1] * x)
        def j(t, x):
            e = np.exp(t[1] * x)
            return np.column_stack((e, t[0] * x * e))
        return f, j
    if name == 'logistic3':  # K/(1 + exp(-r*(x - x0)))
        def f(t, x):
            return t[0] / (1 + np.exp(-t[1] * (x - t[2])))
        def j(t, x):
            e = np.exp(-t[1] * (x - t[2]))
            d = 1 + e
            g = t[0] * e / (d * d)
            return np.column_stack((1 / d, g * (x - t[2]), -g * t[1]))
        return f, j
    if name == 'logistic4':  # lower + (upper - lower)/(1 + (ec50/x)^slope)
        def f(t, x):
            return t[0] + (t[1] - t[0]) / (1 + (t[2] / x) ** t[3])
        def j(t, x):
            u = t[2] / x
            w = u ** t[3]
            d = 1 + w
            g = 1 / d
            h = -(t[1] - t[0]) * g * g
            return np.column_stack((1 - g, g, h * t[3] * w / t[2], h * w * np.log(u)))
        return f, j
    raise ValueError(name)


def main():
    jobs = json.load(sys.stdin)
    out = []
    for job in jobs:
        data = np.loadtxt(job['csv'], delimiter=',', skiprows=1)
        x, y = data[:, 0].copy(), data[:, 1].copy()
        f, j = model(job['model'])
        fun = lambda t: f(t, x) - y
        jac = lambda t: j(t, x)
        kw = {'xtol': 1e-15, 'ftol': 1e-15, 'gtol': 1e-15} if job.get('tight') else {}
        times = []
        res = least_squares(fun, np.array(job['start'], dtype=float), jac=jac, method='lm', **kw)
        for _ in range(job['repeats']):
            t0 = time.process_time()
            res = least_squares(fun, np.array(job['start'], dtype=float), jac=jac, method='lm', **kw)
            times.append(time.process_time() - t0)
        times.sort()
        out.append({'id': job['id'], 'ms': 1000 * times[len(times) // 2], 'nfev': int(res.nfev),
                    'njev': int(res.njev) if res.njev is not None else None, 'theta': res.x.tolist(),
                    'sse': float(2 * res.cost), 'status': int(res.status)})
    json.dump(out, sys.stdout)


main()
