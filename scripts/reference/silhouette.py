#!/usr/bin/python3
"""Reference silhouettes from scikit-learn (Debian's python3-sklearn) for lib/projection/kmeans.ts.

Writes tests/fixtures/projection/silhouette-reference.json: sklearn.metrics.silhouette_samples and
silhouette_score of the iris data that scikit-learn ships, labelled by species, and the mean
silhouette of sklearn's KMeans(n_clusters=k, n_init=10, random_state=0) for k = 2..6.

    /usr/bin/python3 scripts/reference/silhouette.py
"""
import json
import pathlib

import numpy as np
import sklearn
from sklearn.cluster import KMeans
from sklearn.datasets import load_iris
from sklearn.metrics import silhouette_samples, silhouette_score

iris = load_iris()
X = iris.data.astype(np.float32).astype(np.float64)
labels = iris.target
kmeans = {}
for k in range(2, 7):
    fitted = KMeans(n_clusters=k, n_init=10, random_state=0).fit(X)
    kmeans[str(k)] = float(silhouette_score(X, fitted.labels_))
out = {
    "source": f"scikit-learn {sklearn.__version__}: sklearn.metrics.silhouette_samples / silhouette_score, sklearn.cluster.KMeans",
    "labels": labels.tolist(),
    "samples": silhouette_samples(X, labels).tolist(),
    "score": float(silhouette_score(X, labels)),
    "kmeansScores": kmeans,
}
path = pathlib.Path(__file__).resolve().parents[2] / "tests/fixtures/projection/silhouette-reference.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
