#!/usr/bin/env python3
"""Reference values for holdfast's nearest-neighbour search and roc-auc,
computed live with scipy and printed as one JSON object on stdout.

Run from the crate root: python3 tests/reference/knn_auc.py

Sources:
- Neighbour lists and distances: scipy.spatial.cKDTree.query (p = 2 and
  p = 1) on tests/data/penguins.csv (palmerpenguins 0.1.6, see
  tests/data/README.md). Rows with all four measurements, in file order, raw
  units; training rows are the even positions (0, 2, 4, ...), query rows the
  odd positions. Each list is re-sorted by (distance, training position) to
  match holdfast's documented tie rule; the script refuses when a tie could
  straddle the end of the list it asked for.
- Predictions: the vote and mean rules of holdfast's nearest-neighbors
  learner written out in numpy from those lists (1/d weights for
  inverse-distance), as an independent restatement.
- roc-auc: scipy.stats.mannwhitneyu U statistic of the positives divided by
  n1 * n0 (common practice: the Mann-Whitney U / (n1 n0) equals the area
  under the ROC curve, ties counting one half), on fixed score vectors with
  ties; macro one-vs-rest for three classes.

When numpy or scipy is missing it prints {"missing": "<why>"} and exits 0,
so the calling test can decide whether that is a skip or a failure.
"""

import csv
import json
import pathlib
import platform
import sys

try:
    import numpy as np
    import scipy
    from scipy.spatial import cKDTree
    from scipy.stats import mannwhitneyu
except ImportError as error:  # the caller reports this
    print(json.dumps({"missing": str(error)}))
    sys.exit(0)

ROOT = pathlib.Path(__file__).resolve().parents[2]
MEASUREMENTS = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g"]
K = 7
EXTRA = 8


def load_penguins():
    with open(ROOT / "tests" / "data" / "penguins.csv", newline="") as f:
        rows = [r for r in csv.DictReader(f) if all(r[m] != "NA" for m in MEASUREMENTS)]
    names = sorted({r["species"] for r in rows})
    x = np.array([[float(r[m]) for m in MEASUREMENTS] for r in rows])
    y = np.array([names.index(r["species"]) for r in rows])
    return x, y


def sorted_neighbours(tree, queries, p):
    dist, idx = tree.query(queries, k=K + EXTRA, p=p)
    lists_i, lists_d = [], []
    for d_row, i_row in zip(dist, idx):
        order = np.lexsort((i_row, d_row))
        d_row, i_row = d_row[order], i_row[order]
        if not d_row[K + EXTRA - 1] > d_row[K - 1]:
            raise SystemExit("a distance tie reaches past the rows asked for; raise EXTRA")
        lists_i.append([int(v) for v in i_row[:K]])
        lists_d.append([float(v) for v in d_row[:K]])
    return lists_i, lists_d


def weights(dists, inverse):
    dists = np.asarray(dists)
    if not inverse:
        return np.ones(len(dists))
    if dists[0] == 0.0:
        return (dists == 0.0).astype(float)
    return 1.0 / dists


def classify(lists_i, lists_d, y_train, k, inverse, classes):
    labels, probs = [], []
    for idx, dist in zip(lists_i, lists_d):
        idx, dist = idx[:k], dist[:k]
        w = weights(dist, inverse)
        share = np.zeros(classes)
        nearest = np.full(classes, np.inf)
        for i, d, wi in zip(idx, dist, w):
            c = y_train[i]
            share[c] += wi
            if wi > 0:
                nearest[c] = min(nearest[c], d)
        best = min(range(classes), key=lambda c: (-share[c], nearest[c], c))
        labels.append(int(best))
        probs.append([float(v) for v in share / share.sum()])
    return labels, probs


def regress(lists_i, lists_d, y_train, k, inverse):
    out = []
    for idx, dist in zip(lists_i, lists_d):
        w = weights(dist[:k], inverse)
        out.append(float(np.dot(w, y_train[idx[:k]]) / w.sum()))
    return out


def auc_checks():
    scores = [0.9, 0.8, 0.8, 0.7, 0.6, 0.6, 0.6, 0.5, 0.4, 0.4, 0.3, 0.2, 0.2, 0.1, 0.1, 0.05]
    labels = [1, 1, 0, 1, 1, 0, 0, 1, 0, 1, 0, 0, 1, 0, 0, 0]
    s, t = np.array(scores), np.array(labels)
    pos, neg = s[t == 1], s[t == 0]
    binary = mannwhitneyu(pos, neg).statistic / (len(pos) * len(neg))
    probs = [
        [0.7, 0.2, 0.1], [0.5, 0.3, 0.2], [0.2, 0.5, 0.3], [0.3, 0.3, 0.4],
        [0.5, 0.3, 0.2], [0.1, 0.8, 0.1], [0.3, 0.3, 0.4], [0.2, 0.2, 0.6],
        [0.4, 0.4, 0.2], [0.1, 0.3, 0.6], [0.6, 0.2, 0.2], [0.3, 0.5, 0.2],
    ]
    truth = [0, 0, 1, 2, 1, 1, 0, 2, 0, 2, 1, 1]
    p, y = np.array(probs), np.array(truth)
    per_class = []
    for c in range(3):
        u = mannwhitneyu(p[y == c, c], p[y != c, c]).statistic
        per_class.append(float(u / ((y == c).sum() * (y != c).sum())))
    return {
        "binary": {"scores": scores, "labels": labels, "auc": float(binary)},
        "multiclass": {
            "probabilities": probs,
            "labels": truth,
            "per_class": per_class,
            "macro": float(np.mean(per_class)),
        },
    }


def main():
    x, y = load_penguins()
    train, query = np.arange(0, len(x), 2), np.arange(1, len(x), 2)
    tree = cKDTree(x[train])
    knn = {}
    for name, p in [("euclidean", 2), ("manhattan", 1)]:
        lists_i, lists_d = sorted_neighbours(tree, x[query], p)
        mass_tree = cKDTree(x[train][:, :3])
        mass_i, mass_d = sorted_neighbours(mass_tree, x[query][:, :3], p)
        preds = {}
        for k in (1, 3, 7):
            for vote, inverse in (("equal", False), ("inverse-distance", True)):
                labels, probs = classify(lists_i, lists_d, y[train], k, inverse, 3)
                mass = regress(mass_i, mass_d, x[train][:, 3], k, inverse)
                preds[f"{k}/{vote}"] = {"labels": labels, "probabilities": probs, "body_mass": mass}
        knn[name] = {"neighbours": lists_i, "distances": lists_d, "predictions": preds}
    out = {
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
        },
        "rows": int(len(x)),
        "k": K,
        "knn": knn,
        "auc": auc_checks(),
    }
    print(json.dumps(out))


if __name__ == "__main__":
    main()
