#!/usr/bin/python3
"""Reference values for study designs in the statistics engine (electron/engine/stats/design.ts,
glm.ts, family.ts): slopes, interactions, paired contrasts and the effect sizes beside them.

Run with Debian's interpreter, which carries the reference libraries:
    /usr/bin/python3 test/reference/make_design_refs.py
then   Rscript test/reference/make_design_refs.R   (the same slope and interactions with base R)
Writes test/reference/goldens/stats/designs.json (the data and the expected values). Tools and
versions are recorded in its "tools" field: statsmodels OLS (t_test, compare_f_test), scipy
(ttest_rel), numpy. All data are simulated here from fixed numpy seeds.
"""
import json
import os

import numpy as np
import pandas as pd
import scipy
import scipy.stats
import statsmodels
import statsmodels.formula.api as smf

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "goldens", "stats")
os.makedirs(OUT, exist_ok=True)
TOOLS = {
    "python": "/usr/bin/python3",
    "numpy": np.__version__,
    "scipy": scipy.__version__,
    "statsmodels": statsmodels.__version__,
    "pandas": pd.__version__,
}
rng = np.random.default_rng(20261202)


def records(df):
    return [{k: (v.item() if hasattr(v, "item") else v) for k, v in row.items()} for row in df.to_dict("records")]


# 1. A slope with a categorical covariate: y ~ age + C(sex); the t of age.
n = 26
slope = pd.DataFrame(
    {
        "age": np.round(rng.uniform(20, 70, n), 1),
        "sex": rng.choice(["F", "M"], n),
    }
)
slope["y"] = 0.03 * slope["age"] + 0.5 * (slope["sex"] == "M") + rng.normal(0, 0.8, n)
fit = smf.ols("y ~ age + C(sex)", data=slope).fit()
t_age = float(fit.tvalues["age"])
slope_ref = {
    "rows": records(slope),
    "t": t_age,
    "p": float(fit.pvalues["age"]),
    "df": float(fit.df_resid),
    "estimate": float(fit.params["age"]),
    "partial_r": t_age / np.sqrt(t_age**2 + fit.df_resid),
    "partial_eta_squared": t_age**2 / (t_age**2 + fit.df_resid),
}

# 2. Interactions: categorical × categorical (3 × 2), categorical × numeric, numeric × numeric;
#    F of the interaction by comparing the full model with the one without it (compare_f_test).
n = 36
inter = pd.DataFrame(
    {
        "arm": rng.choice(["a", "b", "c"], n),
        "sex": rng.choice(["F", "M"], n),
        "dose": np.round(rng.uniform(0, 10, n), 2),
        "age": np.round(rng.uniform(20, 60, n), 1),
    }
)
inter["y"] = (
    0.2 * inter["dose"]
    + 0.4 * (inter["arm"] == "b") * (inter["sex"] == "M")
    + 0.05 * inter["dose"] * (inter["arm"] == "c")
    + 0.004 * (inter["dose"] - 5) * (inter["age"] - 40)
    + rng.normal(0, 0.7, n)
)
interactions = {}
for name, full, reduced in [
    ("arm:sex", "y ~ C(arm) * C(sex)", "y ~ C(arm) + C(sex)"),
    ("arm:dose", "y ~ C(arm) * dose + age", "y ~ C(arm) + dose + age"),
    ("dose:age", "y ~ dose * age + C(sex)", "y ~ dose + age + C(sex)"),
]:
    f_full = smf.ols(full, data=inter).fit()
    f_red = smf.ols(reduced, data=inter).fit()
    F, p, df_diff = f_full.compare_f_test(f_red)
    interactions[name] = {
        "full": full,
        "F": float(F),
        "p": float(p),
        "df_num": float(df_diff),
        "df": float(f_full.df_resid),
        "partial_eta_squared": float(F * df_diff / (F * df_diff + f_full.df_resid)),
    }

# 3. A paired (within-subject) contrast: 14 participants scanned pre and post.
m = 14
base = rng.normal(0, 1, m)
pre = base + rng.normal(0, 0.5, m)
post = base + 0.4 + rng.normal(0, 0.5, m)
paired_rows = []
for i in range(m):
    pid = f"sub-{i + 1:02d}"
    paired_rows.append({"participant_id": pid, "session": "pre", "y": float(pre[i])})
    paired_rows.append({"participant_id": pid, "session": "post", "y": float(post[i])})
tt = scipy.stats.ttest_rel(post, pre)
diff = post - pre
paired_ref = {
    "rows": paired_rows,
    "t": float(tt.statistic),
    "p": float(tt.pvalue),
    "df": m - 1,
    "d_z": float(diff.mean() / diff.std(ddof=1)),
}

# 4. The covariate-adjusted standardized difference: coefficient of group / sqrt(residual mean square).
n = 30
adj = pd.DataFrame({"group": rng.choice(["control", "patient"], n), "age": np.round(rng.uniform(20, 60, n), 1)})
adj["y"] = 0.6 * (adj["group"] == "patient") + 0.02 * adj["age"] + rng.normal(0, 1, n)
fit = smf.ols("y ~ C(group) + age", data=adj).fit()
adjusted_ref = {
    "rows": records(adj),
    "estimate": float(fit.params["C(group)[T.patient]"]),
    "mse": float(fit.mse_resid),
    "d": float(fit.params["C(group)[T.patient]"] / np.sqrt(fit.mse_resid)),
    "t": float(fit.tvalues["C(group)[T.patient]"]),
}

out = {
    "tools": TOOLS,
    "slope": slope_ref,
    "interactions": {"rows": records(inter), **interactions},
    "paired": paired_ref,
    "adjusted": adjusted_ref,
}
# The same data as CSV for the R cross-check (make_design_refs.R).
slope.to_csv(os.path.join(OUT, "designs_slope.csv"), index=False, float_format="%.17g")
inter.to_csv(os.path.join(OUT, "designs_interactions.csv"), index=False, float_format="%.17g")
with open(os.path.join(OUT, "designs.json"), "w") as f:
    json.dump(out, f, indent=1, allow_nan=False)
    f.write("\n")
print("wrote designs.json")
