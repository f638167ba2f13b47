#!/usr/bin/env python3
"""Reference coefficients for the `logistic` learner, computed live with statsmodels.

Fits two unpenalised problems on tests/data/penguins.csv (see tests/data/README.md):
  - binary: sex (female = 0, male = 1) from bill_length_mm, bill_depth_mm,
    flipper_length_mm, body_mass_g on rows where all five are present (Logit);
  - multinomial: island (Biscoe = 0, Dream = 1, Torgersen = 2, codes in sorted
    label order, the first the reference class) from the same four measurements
    on rows where all four are present (MNLogit).
Both use Newton's method with a tight tolerance and must converge; the script
exits with status 1 and a message on stderr when one does not.

Prints one JSON object on stdout: library versions, and per problem the target,
features, class labels in code order, rows used, whether statsmodels converged,
and the coefficients: for each non-reference class in code order, the
intercept followed by one coefficient per feature.

Exit status 2 with a message on stderr when a library is missing, so a caller
can tell "cannot check here" from "check failed".
"""

import json
import os
import sys

FEATURES = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g"]


def main():
    try:
        import numpy as np
        import pandas as pd
        import statsmodels
        import statsmodels.api as sm
    except ImportError as err:
        print(f"missing python library: {err.name}", file=sys.stderr)
        return 2

    here = os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(here, "..", "data", "penguins.csv")
    data = pd.read_csv(path, na_values=["NA"], keep_default_na=False)

    binary = fit(sm, np, data, "sex", lambda m, x: sm.Logit(m, x))
    multi = fit(sm, np, data, "island", lambda m, x: sm.MNLogit(m, x))
    if binary is None or multi is None:
        return 1
    out = {
        "versions": {
            "python": sys.version.split()[0],
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "binary": binary,
        "multinomial": multi,
    }
    print(json.dumps(out, indent=1))
    return 0


def fit(sm, np, data, target, model):
    rows = data.dropna(subset=FEATURES + [target])
    labels = sorted(rows[target].unique())
    codes = np.array([labels.index(v) for v in rows[target]], dtype=float)
    design = sm.add_constant(rows[FEATURES].to_numpy(dtype=float), has_constant="add")
    result = model(codes, design).fit(method="newton", tol=1e-12, maxiter=200, disp=0)
    converged = bool(result.mle_retvals["converged"])
    if not converged:
        print(f"statsmodels did not converge for target {target}", file=sys.stderr)
        return None
    params = np.asarray(result.params, dtype=float)
    if params.ndim == 1:
        params = params.reshape(-1, 1)
    return {
        "target": target,
        "features": FEATURES,
        "classes": labels,
        "rows": int(len(rows)),
        "converged": converged,
        "iterations": int(result.mle_retvals["iterations"]),
        "coefficients": [[float(v) for v in params[:, k]] for k in range(params.shape[1])],
    }


if __name__ == "__main__":
    sys.exit(main())
