#!/usr/bin/python3
"""Reference values for the statistics engine (electron/engine/stats).

Run with Debian's interpreter, which carries the reference libraries:
    /usr/bin/python3 test/reference/make_stats_refs.py
then   Rscript test/reference/make_stats_refs.R
With --live it instead reads diagram pairs as JSON on stdin ([{"a": [[b, d], ...], "b": [...]}, ...])
and prints, for each, exact W1 and W2 (scipy linear_sum_assignment) and the exact bottleneck
(gudhi.bottleneck_distance with e = 0); the live cross-check test uses this.
Writes JSON goldens (and the CSV datasets the R script reads) to test/reference/goldens/stats/.

Tools and versions used for the committed goldens are recorded in each file's "tools" field:
numpy, scipy (t/F tails, f_oneway, gammaln), statsmodels (OLS t_test / f_test,
multipletests fdr_bh), gudhi (hera Wasserstein, bottleneck, SlicedWassersteinDistance).
All data are simulated here from fixed numpy seeds.
"""
import json
import os

import gudhi
import gudhi.hera
import numpy as np
import pandas as pd
import scipy
import scipy.optimize
import scipy.special
import scipy.stats
import statsmodels
import statsmodels.formula.api as smf
from gudhi.representations import SlicedWassersteinDistance
from statsmodels.stats.multitest import multipletests

import sys

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "goldens", "stats")
os.makedirs(OUT, exist_ok=True)
TOOLS = {
    "python": "/usr/bin/python3",
    "numpy": np.__version__,
    "scipy": scipy.__version__,
    "statsmodels": statsmodels.__version__,
    "pandas": pd.__version__,
    "gudhi": gudhi.__version__,
}


def dump(name, obj):
    obj = {"tools": TOOLS, **obj}
    with open(os.path.join(OUT, name), "w") as f:
        json.dump(obj, f, indent=1, allow_nan=False)
        f.write("\n")


def exact_wasserstein(A, B, p):
    """A second, independent exact value: scipy's linear_sum_assignment on the diagonal-augmented cost matrix."""
    n1, n2 = len(A), len(B)
    n = n1 + n2
    if n == 0:
        return 0.0
    C = np.zeros((n, n))
    if n1 and n2:
        C[:n1, :n2] = np.max(np.abs(A[:, None, :] - B[None, :, :]), axis=-1) ** p
    C[:n1, n2:] = (((A[:, 1] - A[:, 0]) / 2) ** p)[:, None]
    C[n1:, :n2] = (((B[:, 1] - B[:, 0]) / 2) ** p)[None, :]
    r, c = scipy.optimize.linear_sum_assignment(C)
    return float(C[r, c].sum() ** (1 / p))


if "--live" in sys.argv:
    out = []
    for case in json.load(sys.stdin):
        A = np.array(case["a"], dtype=float).reshape(-1, 2)
        B = np.array(case["b"], dtype=float).reshape(-1, 2)
        out.append({"w1": exact_wasserstein(A, B, 1), "w2": exact_wasserstein(A, B, 2),
                    "bottleneck": float(gudhi.bottleneck_distance(A, B, 0))})
    json.dump(out, sys.stdout)
    sys.exit(0)

# ---------- GLM: t and F against statsmodels OLS ----------
def glm_case(name, rng, n_per_group, levels, with_site, contrasts, n_features=4):
    n = sum(n_per_group)
    dx = np.repeat(levels, n_per_group)
    rng.shuffle(dx)
    age = np.round(rng.uniform(18, 70, n), 1)
    site = rng.choice(["s1", "s2", "s3"], n)
    df = pd.DataFrame({"id": [f"sub-{i:02d}" for i in range(n)], "dx": dx, "age": age, "site": site})
    # A few missing covariates: those rows must be excluded by the design.
    missing = rng.choice(n, 2, replace=False)
    df.loc[missing[0], "age"] = np.nan
    if with_site:
        df.loc[missing[1], "site"] = None
    feats = []
    group_effect = {lv: k * 0.4 for k, lv in enumerate(levels)}
    for j in range(n_features):
        y = 0.03 * age + np.array([group_effect[g] for g in dx]) * (j % 2) + rng.normal(0, 1, n)
        df[f"f{j}"] = np.round(y, 6)
        feats.append(f"f{j}")
    covs = ["age"] + (["site"] if with_site else [])
    used = df.dropna(subset=covs)
    results = []
    for c in contrasts:
        rows = []
        for f in feats:
            formula = f"{f} ~ C(dx) + age" + (" + C(site)" if with_site else "")
            fit = smf.ols(formula, data=used).fit()
            names = list(fit.params.index)
            if c["kind"] == "pair":
                vec = np.zeros(len(names))
                for lv, sign in ((c["a"], 1), (c["b"], -1)):
                    key = f"C(dx)[T.{lv}]"
                    if key in names:
                        vec[names.index(key)] += sign
                tt = fit.t_test(vec)
                rows.append({"statistic": float(tt.tvalue.item()), "p": float(tt.pvalue.item()), "df": float(tt.df_denom)})
            else:
                r = np.zeros((len(levels) - 1, len(names)))
                for k, lv in enumerate(levels[1:]):
                    r[k, names.index(f"C(dx)[T.{lv}]")] = 1
                ft = fit.f_test(r)
                rows.append({"statistic": float(np.squeeze(ft.fvalue)), "p": float(ft.pvalue), "df1": float(ft.df_num), "df": float(ft.df_denom)})
        results.append({"contrast": c, "features": rows})
    df.to_csv(os.path.join(OUT, f"{name}.csv"), index=False, na_rep="NA")
    participants = []
    for _, r in df.iterrows():
        participants.append({
            "id": r["id"],
            "covariates": {
                "dx": r["dx"],
                "age": None if pd.isna(r["age"]) else float(r["age"]),
                "site": None if (not with_site or r["site"] is None or pd.isna(r["site"])) else r["site"],
            },
            "features": [float(r[f]) for f in feats],
        })
    return {"name": name, "covariates": covs, "levels": list(levels), "participants": participants,
            "excluded": int(len(df) - len(used)), "results": results}


rng = np.random.default_rng(20260501)
glm = [
    glm_case("glm_two_groups", rng, [14, 12], ["control", "patient"], True, [{"kind": "pair", "a": "control", "b": "patient"}]),
    glm_case("glm_three_groups", rng, [10, 11, 9], ["a", "b", "c"], False,
             [{"kind": "all-levels"}, {"kind": "pair", "a": "c", "b": "b"}]),
]
grid = []
for df_ in [1, 3, 7.5, 28, 200]:
    for t in [0.1, 1.0, 2.2, 4.5, 12.0]:
        grid.append({"t": t, "df": df_, "p": float(2 * scipy.stats.t.sf(t, df_))})
fgrid = []
for d1, d2 in [(1, 5), (2, 27), (3, 10), (5, 100)]:
    for f in [0.2, 1.0, 3.3, 9.0, 40.0]:
        fgrid.append({"f": f, "df1": d1, "df2": d2, "p": float(scipy.stats.f.sf(f, d1, d2))})
dump("glm.json", {"source": "statsmodels OLS t_test/f_test via formula with treatment coding; scipy.stats t.sf/f.sf",
                  "cases": glm, "tGrid": grid, "fGrid": fgrid})

# ---------- Benjamini–Hochberg ----------
rng = np.random.default_rng(7)
bh = []
for m in [1, 5, 40, 300]:
    p = np.concatenate([rng.uniform(0, 1, m - m // 5), rng.uniform(0, 0.01, m // 5)])
    if m >= 5:
        p[1] = p[0]  # a tie
    qv = multipletests(p, method="fdr_bh")[1]
    bh.append({"p": p.tolist(), "q": qv.tolist()})
pd.DataFrame([{"case": k, "p": v} for k, c in enumerate(bh) for v in c["p"]]).to_csv(
    os.path.join(OUT, "bh_cases.csv"), index=False, float_format="%.17g")
dump("bh.json", {"source": "statsmodels.stats.multitest.multipletests(method='fdr_bh')", "cases": bh})

# ---------- Hedges' g (Hedges 1981, exact J) ----------
rng = np.random.default_rng(11)
hg = []
for na, nb, shift in [(5, 7, 0.5), (20, 18, -1.0), (3, 3, 2.0), (40, 60, 0.1)]:
    a = rng.normal(shift, 1.3, na)
    b = rng.normal(0, 1.0, nb)
    dfree = na + nb - 2
    sp = np.sqrt(((na - 1) * a.var(ddof=1) + (nb - 1) * b.var(ddof=1)) / dfree)
    j = np.exp(scipy.special.gammaln(dfree / 2) - scipy.special.gammaln((dfree - 1) / 2)) / np.sqrt(dfree / 2)
    hg.append({"a": a.tolist(), "b": b.tolist(), "J": float(j), "g": float(j * (a.mean() - b.mean()) / sp),
               "J_approx": 1 - 3 / (4 * dfree - 1)})
dump("hedges.json", {"source": "numpy means/variances, scipy.special.gammaln for the exact J (Hedges 1981)", "cases": hg})


# ---------- Diagram distances ----------
def random_diagram(rng, k, scale=1.0, grid=None):
    b = rng.uniform(0, scale, k)
    d = b + rng.exponential(0.2 * scale, k)
    if grid:
        b = np.round(b * grid) / grid
        d = np.maximum(b, np.round(d * grid) / grid)
    return np.column_stack([b, d])


rng = np.random.default_rng(5)
pairs = []
sizes = [(0, 0), (0, 4), (3, 0), (1, 1), (5, 8), (12, 12), (40, 25), (80, 100), (150, 150)]
for k, (n1, n2) in enumerate(sizes):
    grid = 10 if k in (4, 5) else None  # ties on a coarse grid
    A = random_diagram(rng, n1, grid=grid)
    B = random_diagram(rng, n2, grid=grid)
    entry = {"a": A.tolist(), "b": B.tolist()}
    for p in (1, 2):
        # delta is hera's relative error bound (default 0.01); taken tiny here so the reference is exact to ~1e-12.
        entry[f"w{p}"] = float(gudhi.hera.wasserstein_distance(A.reshape(-1, 2), B.reshape(-1, 2), order=p,
                                                               internal_p=np.inf, delta=1e-12))
        entry[f"w{p}_lsa"] = exact_wasserstein(A.reshape(-1, 2), B.reshape(-1, 2), p)
    entry["bottleneck"] = float(gudhi.bottleneck_distance(A.reshape(-1, 2), B.reshape(-1, 2)))
    entry["bottleneck_exact"] = float(gudhi.bottleneck_distance(A.reshape(-1, 2), B.reshape(-1, 2), 0))
    for m in (10, 50):
        swd = SlicedWassersteinDistance(num_directions=m)
        if n1 > 0 and n2 > 0:
            swd.fit([A])
            entry[f"sw{m}"] = float(swd.transform([B])[0, 0])
    pairs.append(entry)
# Infinite points: the engine drops them or clips them; the reference sees the result.
A = random_diagram(rng, 10)
B = random_diagram(rng, 12)
inf_case = {
    "a": A.tolist() + [[0.0, None]],
    "b": B.tolist() + [[0.0, None], [0.3, None]],
    "clip": 2.5,
    "w2_drop": float(gudhi.hera.wasserstein_distance(A, B, order=2, internal_p=np.inf, delta=1e-12)),
    "w2_clip": float(gudhi.hera.wasserstein_distance(
        np.vstack([A, [[0.0, 2.5]]]), np.vstack([B, [[0.0, 2.5], [0.3, 2.5]]]), order=2, internal_p=np.inf,
        delta=1e-12)),
    "bottleneck_clip": float(gudhi.bottleneck_distance(
        np.vstack([A, [[0.0, 2.5]]]), np.vstack([B, [[0.0, 2.5], [0.3, 2.5]]]), 0)),
}
dump("diagram_distances.json", {
    "source": "gudhi.hera.wasserstein_distance(order=p, internal_p=inf, delta=1e-12); scipy linear_sum_assignment (w*_lsa); gudhi.bottleneck_distance (default e and e=0); "
              "gudhi.representations.SlicedWassersteinDistance(num_directions=M)",
    "pairs": pairs, "infinite": inf_case})

# ---------- Classical MDS ----------
rng = np.random.default_rng(9)
def classical_mds(D):
    n = D.shape[0]
    J = np.eye(n) - np.ones((n, n)) / n
    Bm = -0.5 * J @ (D ** 2) @ J
    w, v = np.linalg.eigh(Bm)
    idx = np.argsort(w)[::-1][:2]
    return (v[:, idx] * np.sqrt(w[idx])).tolist(), w[np.argsort(w)[::-1]][:5].tolist()

X = rng.normal(0, 1, (25, 4)) * np.array([3, 2, 0.5, 0.1])
De = np.sqrt(((X[:, None, :] - X[None, :, :]) ** 2).sum(-1))
diags = [random_diagram(rng, int(rng.integers(5, 20))) for _ in range(15)]
Dw = np.array([[gudhi.hera.wasserstein_distance(a, b, order=2, internal_p=np.inf, delta=1e-12) for b in diags]
               for a in diags])
Dw = (Dw + Dw.T) / 2
mds = []
for D in (De, Dw):
    coords, ev = classical_mds(D)
    mds.append({"distances": D.tolist(), "coordinates": coords, "eigenvalues": ev})
dump("mds.json", {"source": "numpy.linalg.eigh of -1/2 J D^2 J (Torgerson-Gower); distances: Euclidean and gudhi hera W2",
                  "cases": mds})

# ---------- PERMANOVA on 1-D Euclidean data = one-way ANOVA F ----------
rng = np.random.default_rng(13)
perm = []
for sizes_ in [(6, 7), (5, 8, 6), (10, 10, 12, 9)]:
    groups = [rng.normal(0.3 * k, 1, s) for k, s in enumerate(sizes_)]
    x = np.concatenate(groups)
    lab = np.concatenate([[k] * s for k, s in enumerate(sizes_)])
    F, p = scipy.stats.f_oneway(*groups)
    perm.append({"x": x.tolist(), "group": lab.tolist(), "F": float(F), "p_parametric": float(p)})
dump("permanova.json", {"source": "scipy.stats.f_oneway (Anderson 2001: pseudo-F on Euclidean 1-D distances is the ANOVA F)",
                        "cases": perm})
print("wrote goldens to", OUT)
