#!/usr/bin/python3
"""Reference Clopper–Pearson intervals for test/validation/binomial.ts.

Run with Debian's interpreter, which carries scipy and statsmodels:
    /usr/bin/python3 test/validation/make_binomial_reference.py
Writes test/validation/binomial-reference.json: for each (k, n, level) the interval from
statsmodels.stats.proportion.proportion_confint(method='beta') (Clopper & Pearson 1934) and,
independently, from scipy.stats.beta.ppf. Tool versions are recorded in the "tools" field.
"""
import json
import os

import scipy
import scipy.stats
import statsmodels
from statsmodels.stats.proportion import proportion_confint

CASES = [
    (0, 20, 0.95), (1, 20, 0.95), (20, 20, 0.95), (50, 1000, 0.95), (37, 1000, 0.95),
    (65, 1000, 0.95), (12, 400, 0.95), (3, 100, 0.99), (500, 1000, 0.95), (61, 1200, 0.995),
    (7, 50, 0.9), (999, 1000, 0.95),
]

cases = []
for k, n, level in CASES:
    lo, hi = proportion_confint(k, n, alpha=1 - level, method="beta")
    tail = (1 - level) / 2
    lo2 = 0.0 if k == 0 else float(scipy.stats.beta.ppf(tail, k, n - k + 1))
    hi2 = 1.0 if k == n else float(scipy.stats.beta.ppf(1 - tail, k + 1, n - k))
    assert abs(lo - lo2) < 1e-12 and abs(hi - hi2) < 1e-12
    cases.append({"k": k, "n": n, "level": level, "low": float(lo), "high": float(hi)})

out = {
    "tools": {"python": "/usr/bin/python3", "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
    "method": "statsmodels proportion_confint(method='beta'), checked against scipy.stats.beta.ppf",
    "cases": cases,
}
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "binomial-reference.json")
with open(path, "w") as f:
    json.dump(out, f, indent=2)
    f.write("\n")
print("wrote", path)
