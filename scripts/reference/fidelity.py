#!/usr/bin/python3
"""Reference values for lib/projection (exact kNN and fidelity scores) from scikit-learn and SciPy.

Uses Debian's python3-sklearn / python3-scipy (install with `apt-get install -y python3-sklearn`)
and writes tests/fixtures/projection/fidelity-reference.json, which
tests/unit/projection/fidelity-reference.test.ts and knn-reference.test.ts read (CI has no Python).

    /usr/bin/python3 scripts/reference/fidelity.py

Cases:
- "gaussian-200x8": a fixed random matrix (numpy default_rng, fixed seed) with unequal column
  scales, checked here to have no tied distances in either space, so every rank is unambiguous
  and our values must equal scikit-learn's to rounding (tests: 1e-9).
- "iris": the iris data scikit-learn ships (150 x 4; one duplicated row and many tied distances).
- "digits": the digits data scikit-learn ships (1797 x 64, integer pixels 0..16; very many ties,
  whose order scikit-learn leaves arbitrary, so the tests allow 5e-4).

For each: the data and a fixed 2-D embedding, sklearn.decomposition.PCA(n_components=2) of it, both
ROUNDED TO FLOAT32 (the precision Asterism stores factors in) before anything is computed, so that
Python and TypeScript see bit-identical inputs; the JSON holds the shortest decimal that rounds back
to each float32. Then:
- sklearn.manifold.trustworthiness(X, Y, n_neighbors=k) for k = 5, 15, 50 (Euclidean, and cosine
  for the Gaussian case), and continuity as trustworthiness(Y, X, n_neighbors=k);
- sklearn.neighbors.NearestNeighbors(n_neighbors=15).kneighbors() (self excluded) for the Gaussian
  case, Euclidean and cosine (algorithm="brute");
- scipy.stats.spearmanr over ALL pairs of scipy.spatial.distance.pdist(X) and pdist(Y) (the
  Shepard correlation when every pair is in the sample), and Kruskal stress-1 with the latent
  distances optimally scaled, sqrt(sum((d - b delta)^2) / sum(d^2)), b = sum(d delta) / sum(delta^2),
  computed here with numpy as an independent implementation of the definition in fidelity.ts.
"""

import json
import pathlib
import platform

import numpy as np
import scipy
import sklearn
from scipy.spatial.distance import pdist
from scipy.stats import spearmanr
from sklearn.datasets import load_digits, load_iris
from sklearn.decomposition import PCA
from sklearn.manifold import trustworthiness
from sklearn.neighbors import NearestNeighbors

SEED = 20261204
KS = [5, 15, 50]
KNN_K = 15
OUT = pathlib.Path(__file__).resolve().parents[2] / "tests" / "fixtures" / "projection" / "fidelity-reference.json"


def as_float32(a):
    """Rounds to float32 and returns float64 holding exactly those values."""
    return np.asarray(a, dtype=np.float32).astype(np.float64)


def flat32(a):
    """Row-major list of the shortest decimals that round back to each float32 value."""
    return [float(str(v)) for v in np.asarray(a, dtype=np.float32).ravel()]


def has_ties(x, metric="euclidean"):
    distances = pdist(x, metric=metric)
    return len(np.unique(distances)) < len(distances)


def stress(latent, mapped):
    b = np.dot(mapped, latent) / np.dot(latent, latent)
    return float(np.sqrt(np.sum((mapped - b * latent) ** 2) / np.sum(mapped**2)))


def case(name, x_raw, integers=False, cosine=False, knn=False):
    x = as_float32(x_raw)
    y = as_float32(PCA(n_components=2).fit_transform(x))
    n, d = x.shape
    out = {
        "name": name,
        "n": n,
        "d": d,
        "data": [int(v) for v in x.ravel()] if integers else flat32(x),
        "embedding": flat32(y),
        "tiesLatent": bool(has_ties(x)),
        "tiesMap": bool(has_ties(y)),
        "trustworthiness": {str(k): float(trustworthiness(x, y, n_neighbors=k)) for k in KS},
        "continuity": {str(k): float(trustworthiness(y, x, n_neighbors=k)) for k in KS},
    }
    if cosine:
        out["tiesLatentCosine"] = bool(has_ties(x, "cosine"))
        out["trustworthinessCosine"] = {str(k): float(trustworthiness(x, y, n_neighbors=k, metric="cosine")) for k in KS}
    if knn:
        distances, indices = NearestNeighbors(n_neighbors=KNN_K).fit(x).kneighbors()
        cos_distances, cos_indices = NearestNeighbors(n_neighbors=KNN_K, metric="cosine", algorithm="brute").fit(x).kneighbors()
        out["knn"] = {
            "k": KNN_K,
            "euclidean": {"indices": indices.ravel().tolist(), "distances": distances.ravel().tolist()},
            "cosine": {"indices": cos_indices.ravel().tolist(), "distances": cos_distances.ravel().tolist()},
        }
    latent, mapped = pdist(x), pdist(y)
    out["allPairs"] = {
        "pairs": len(latent),
        "shepardRho": float(spearmanr(latent, mapped).correlation),
        "stress": stress(latent, mapped),
    }
    return out


def main():
    rng = np.random.default_rng(SEED)
    gaussian = rng.standard_normal((200, 8)) * np.linspace(2.0, 0.5, 8)
    cases = [
        case("gaussian-200x8", gaussian, cosine=True, knn=True),
        case("iris", load_iris().data),
        case("digits", load_digits().data, integers=True),
    ]
    first = cases[0]
    assert not first["tiesLatent"] and not first["tiesMap"] and not first["tiesLatentCosine"], "the no-ties case has ties"
    document = {
        "source": f"scikit-learn {sklearn.__version__} sklearn.manifold.trustworthiness / sklearn.neighbors.NearestNeighbors, "
                  f"scipy {scipy.__version__} scipy.stats.spearmanr, generated by scripts/reference/fidelity.py",
        "sklearn": sklearn.__version__,
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "python": platform.python_version(),
        "seed": SEED,
        "layout": "data n x d and embedding n x 2 row-major, float32 values (digits: integers); "
                  "knn indices/distances n x k row-major, self excluded",
        "cases": cases,
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(document, separators=(",", ":")) + "\n")
    print(f"wrote {OUT} ({OUT.stat().st_size} bytes)")
    for c in cases:
        print(c["name"], "ties latent/map:", c["tiesLatent"], c["tiesMap"], "T:", c["trustworthiness"], "C:", c["continuity"], c["allPairs"])


if __name__ == "__main__":
    main()
