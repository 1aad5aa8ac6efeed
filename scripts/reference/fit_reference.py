#!/usr/bin/python3
"""Reference values for lib/fit from scikit-learn (Debian's python3-sklearn 1.2).

Writes tests/fixtures/fit/fit-reference.json, which tests/unit/fit/reference.test.ts reads:

  - "metrics": fixed outcome/score vectors (with tied scores) and sklearn.metrics.log_loss,
    roc_auc_score and mean_poisson_deviance on them;
  - "gaussian" and "bernoulli": a small long table (row entity, column entity, two numeric
    covariates, one categorical covariate with three levels, outcome) as strings, and the
    main-effects-only fit from sklearn.linear_model.LinearRegression / LogisticRegression(penalty=None)
    on the one-hot design (first level of every categorical column dropped, as lib/fit does): the
    coefficients, the intercept and the fitted linear predictor per row. The logistic fit is
    checked here against a plain Newton–Raphson solve (numpy) so that the fixture is converged well
    beyond the 1e-4 the test asks for.

Run with Debian's interpreter, the one that sees python3-sklearn:

    /usr/bin/python3 scripts/reference/fit_reference.py
"""

import json
import pathlib
import platform

import numpy as np
import sklearn
from sklearn.linear_model import LinearRegression, LogisticRegression
from sklearn.metrics import log_loss, mean_poisson_deviance, roc_auc_score

SEED = 20261206
OUT = pathlib.Path(__file__).resolve().parents[2] / "tests" / "fixtures" / "fit" / "fit-reference.json"


def one_hot(codes, levels):
    """Indicators of levels 1..L-1 (level 0, the first seen, is the reference)."""
    out = np.zeros((len(codes), levels - 1))
    for t, c in enumerate(codes):
        if c > 0:
            out[t, c - 1] = 1.0
    return out


def table(rng, rows, columns, n, likelihood):
    """A long table; entity and category codes in first-appearance order, matching lib/fit's levels."""
    row = rng.integers(0, rows, n)
    col = rng.integers(0, columns, n)
    # Make sure the first rows show every entity in order 0, 1, 2, ... so first-appearance order = code order.
    row[:rows] = np.arange(rows)
    col[:columns] = np.arange(columns)
    cat = rng.integers(0, 3, n)
    cat[:3] = np.arange(3)
    x1 = rng.normal(2.0, 1.5, n)
    x2 = rng.uniform(-1, 1, n)
    a = rng.normal(0, 0.7, rows)
    b = rng.normal(0, 0.7, columns)
    eta = 0.3 + a[row] + b[col] + 0.4 * x1 - 0.8 * x2 + np.array([0.0, 0.5, -0.4])[cat]
    if likelihood == "gaussian":
        y = eta + rng.normal(0, 1.0, n)
        cells_y = [repr(float(v)) for v in y]
    else:
        # centre so the outcome is roughly balanced
        eta = eta - eta.mean()
        y = (rng.uniform(size=n) < 1 / (1 + np.exp(-eta))).astype(float)
        cells_y = [str(int(v)) for v in y]
    cats = ["north", "south", "east"]
    header = ["shop", "category", "footfall", "weather", "region", "y"]
    cells = [[f"s{row[t]}", f"k{col[t]}", repr(float(x1[t])), repr(float(x2[t])), cats[cat[t]], cells_y[t]] for t in range(n)]
    design = np.hstack([one_hot(row, rows), one_hot(col, columns), x1[:, None], x2[:, None], one_hot(cat, 3)])
    return header, cells, design, y


def newton_logistic(design, y, iterations=100):
    X = np.hstack([np.ones((len(y), 1)), design])
    w = np.zeros(X.shape[1])
    for _ in range(iterations):
        p = 1 / (1 + np.exp(-(X @ w)))
        g = X.T @ (p - y)
        h = X.T @ (X * (p * (1 - p))[:, None])
        step = np.linalg.solve(h, g)
        w -= step
        if np.max(np.abs(step)) < 1e-14:
            break
    return w


def main():
    rng = np.random.default_rng(SEED)
    rows, columns = 12, 8
    out = {"source": f"scikit-learn {sklearn.__version__}, numpy {np.__version__}, Python {platform.python_version()}", "seed": SEED}

    header, cells, design, y = table(rng, rows, columns, 400, "gaussian")
    ols = LinearRegression().fit(design, y)
    out["gaussian"] = {
        "rows": rows,
        "columns": columns,
        "header": header,
        "cells": cells,
        "intercept": float(ols.intercept_),
        "coefficients": ols.coef_.tolist(),
        "eta": ols.predict(design).tolist(),
        "note": "coefficients: row entities s1..s11, column entities k1..k7 (contrasts to s0, k0), footfall, weather, region=south, region=east",
    }

    header, cells, design, y = table(rng, rows, columns, 600, "bernoulli")
    logistic = LogisticRegression(penalty=None, solver="newton-cholesky", tol=1e-12, max_iter=1000).fit(design, y)
    w = newton_logistic(design, y)
    sk = np.concatenate([[logistic.intercept_[0]], logistic.coef_[0]])
    assert np.max(np.abs(sk - w)) < 1e-6, f"sklearn and Newton disagree by {np.max(np.abs(sk - w))}"
    out["bernoulli"] = {
        "rows": rows,
        "columns": columns,
        "header": header,
        "cells": cells,
        "intercept": float(logistic.intercept_[0]),
        "coefficients": logistic.coef_[0].tolist(),
        "eta": logistic.decision_function(design).tolist(),
        "newtonMaxDifference": float(np.max(np.abs(sk - w))),
        "note": "LogisticRegression(penalty=None, solver=newton-cholesky, tol=1e-12); agrees with a numpy Newton-Raphson solve to newtonMaxDifference",
    }

    # Metrics on fixed inputs; scores rounded to one decimal so that many are tied.
    y_binary = (rng.uniform(size=60) < 0.4).astype(float)
    scores = np.round(np.clip(0.35 * y_binary + rng.uniform(0, 0.65, 60), 0.001, 0.999), 1)
    scores = np.clip(scores, 0.05, 0.95)
    counts = rng.poisson(2.5, 50).astype(float)
    means = rng.uniform(0.5, 5.0, 50)
    out["metrics"] = {
        "y": y_binary.tolist(),
        "probability": scores.tolist(),
        "logLoss": float(log_loss(y_binary, scores)),
        "auc": float(roc_auc_score(y_binary, scores)),
        "distinctScores": int(len(np.unique(scores))),
        "counts": counts.tolist(),
        "means": means.tolist(),
        "meanPoissonDeviance": float(mean_poisson_deviance(counts, means)),
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
