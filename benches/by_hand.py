#!/usr/bin/env python3
"""The same nearest-neighbour grid written by hand with numpy and scipy.

This is the comparison for `benches/compare.sh`: what a practitioner writes
without holdfast. It reads the job sheet that `holdfast compile --out` wrote
(so it uses exactly the same splits) and, for each nearest-neighbors
candidate and each split, fits the z-score on the training part (sample sd,
n - 1, as holdfast's prep does), builds a scipy k-d tree, queries the
validation rows, votes (equal weights; a tie goes to the lower class code)
and scores balanced accuracy. It writes one CSV line per job and prints the
mean balanced accuracy per candidate, so the two tools can be compared.

It does no more and no less work per job than a straightforward script:
no sharing of the search across k (that is what holdfast adds). Start-up,
imports and reading the CSV are part of what is timed.

Usage: by_hand.py SHEET DATA TARGET OUT [--features PREFIX]
"""

import argparse
import csv
import json
import sys

import numpy as np
from scipy.spatial import cKDTree


def read_data(path, target, prefix):
    with open(path, newline="") as f:
        reader = csv.reader(f)
        header = next(reader)
        rows = list(reader)
    feats = [i for i, h in enumerate(header) if h.startswith(prefix)]
    t = header.index(target)
    x = np.array([[float(r[i]) for i in feats] for r in rows])
    labels = sorted({r[t] for r in rows})
    code = {v: i for i, v in enumerate(labels)}
    y = np.array([code[r[t]] for r in rows], dtype=np.int64)
    return x, y, len(labels)


def balanced_accuracy(truth, pred, classes):
    recalls = []
    for c in range(classes):
        mask = truth == c
        if mask.any():
            recalls.append(np.mean(pred[mask] == c))
    return float(np.mean(recalls))


def evaluate(x, y, classes, train, valid, k):
    xt, xv = x[train], x[valid]
    mean = xt.mean(axis=0)
    sd = xt.std(axis=0, ddof=1)
    sd[sd == 0] = 1.0
    xt = (xt - mean) / sd
    xv = (xv - mean) / sd
    tree = cKDTree(xt)
    k = min(k, len(train))
    _, idx = tree.query(xv, k=k)
    idx = idx.reshape(len(valid), k)
    votes = np.zeros((len(valid), classes))
    neighbour_labels = y[train][idx]
    for c in range(classes):
        votes[:, c] = (neighbour_labels == c).sum(axis=1)
    pred = votes.argmax(axis=1)
    return balanced_accuracy(y[valid], pred, classes)


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("sheet")
    p.add_argument("data")
    p.add_argument("target")
    p.add_argument("out")
    p.add_argument("--features", default="f", help="feature column prefix")
    a = p.parse_args()
    with open(a.sheet) as f:
        sheet = json.load(f)
    x, y, classes = read_data(a.data, a.target, a.features)
    splits = {s["id"]: s for s in sheet["splits"]}
    candidates = {c["id"]: c for c in sheet["candidates"]}
    scores = {}
    with open(a.out, "w", newline="") as f:
        out = csv.writer(f)
        out.writerow(["job", "candidate", "split", "balanced_accuracy"])
        for job in sheet["jobs"]:
            c = candidates[job["candidate"]]
            if c["learner"] != "nearest-neighbors":
                continue
            s = splits[job["split"]]
            train = np.array(s["train"], dtype=np.int64)
            valid = np.array(s["validation"], dtype=np.int64)
            ba = evaluate(x, y, classes, train, valid, int(c["settings"]["k"]))
            out.writerow([job["id"], c["label"], s["id"], repr(ba)])
            scores.setdefault(c["label"], []).append(ba)
    for label, values in scores.items():
        print(f"{label}\t{np.mean(values):.4f}\t{len(values)} splits")
    return 0


if __name__ == "__main__":
    sys.exit(main())
