#!/usr/bin/env bash
# holdfast against the same grid written by hand with numpy and scipy
# (benches/by_hand.py), timed in one run as whole processes: start-up,
# reading the files and (for holdfast) the ledger writes included.
#
# The plan: 10,000 generated rows, 5 features, 100 groups, grouped 5-fold x
# 2 repeats, nearest-neighbors with 16 values of k. The script reads the job
# sheet `holdfast compile --out` wrote, so both do the same splits. Two
# holdfast plans are timed: `same-work` (training-scores = false: validation
# scores only, exactly what the script computes) and `default` (holdfast's
# default, which also scores every training part: 5 times the queries).
#
# Usage: benches/compare.sh [RUNS]   (needs python3 with numpy and scipy;
# uses hyperfine when installed: apt-get install -y hyperfine)
set -euo pipefail
runs="${1:-5}"
root="$(cd "$(dirname "$0")/.." && pwd)"
cargo build --release --quiet --manifest-path "$root/Cargo.toml"
holdfast="$root/target/release/holdfast"
python3 -c 'import numpy, scipy' 2>/dev/null || {
    echo "compare.sh: numpy and scipy are needed (python3 -m pip install numpy scipy)" >&2
    exit 2
}
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
cd "$work"
"$holdfast" bench-data --out data.csv --rows 10000 --features 5 --groups 100 >/dev/null
write_plan() { # name training-scores
    cat >"$1.toml" <<PLAN
[plan]
name = "compare"
seed = 1

[data]
path = "data.csv"
target = "label"
group = "unit"
exclude = ["t"]

[resample]
scheme = "k-fold"
folds = 5
repeats = 2

[prep]
scale = "z-score"

[[candidates]]
learner = "nearest-neighbors"
k = [1, 3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31]

[select]
metric = "balanced-accuracy"
training-scores = $2
PLAN
}
write_plan same-work false
write_plan default true
"$holdfast" compile same-work.toml --out sheet.json >/dev/null
script="python3 $root/benches/by_hand.py sheet.json data.csv label by-hand.csv"
same="$holdfast run same-work.toml --ledger $work/ledger.sqlite"
default="$holdfast run default.toml --ledger $work/ledger.sqlite"
echo "machine: $(nproc) cores; $("$holdfast" --version); $(python3 -c 'import numpy, scipy, sys; print("python", sys.version.split()[0], "numpy", numpy.__version__, "scipy", scipy.__version__)')"

if command -v hyperfine >/dev/null; then
    # A fresh ledger for every holdfast run, so no job is reused.
    hyperfine --warmup 1 --runs "$runs" -N --prepare "rm -f $work/ledger.sqlite $work/ledger.sqlite-wal $work/ledger.sqlite-shm" \
        --export-json times.json -n by-hand "$script" -n same-work "$same" -n default "$default"
    python3 - <<'PY'
import json
r = {x["command"]: x for x in json.load(open("times.json"))["results"]}
m = {k: v["median"] for k, v in r.items()}
print(f"median seconds: by-hand {m['by-hand']:.3f}, holdfast same-work {m['same-work']:.3f}, holdfast default {m['default']:.3f}")
print(f"ratio by-hand / holdfast (same work): {m['by-hand'] / m['same-work']:.1f}x")
print(f"ratio by-hand / holdfast (default, training scores too): {m['by-hand'] / m['default']:.1f}x")
PY
else
    time_it() { # command: median wall seconds of $runs runs
        local t=()
        for _ in $(seq "$runs"); do
            rm -f "$work"/ledger.sqlite*
            local s e
            s=$(date +%s.%N); $1 >/dev/null; e=$(date +%s.%N)
            t+=("$(echo "$e - $s" | bc)")
        done
        printf '%s\n' "${t[@]}" | sort -n | sed -n "$(((runs + 1) / 2))p"
    }
    a=$(time_it "$script"); b=$(time_it "$same"); c=$(time_it "$default")
    echo "median seconds: by-hand $a, holdfast same-work $b, holdfast default $c"
    echo "ratio by-hand / holdfast (same work): $(echo "scale=1; $a / $b" | bc)x"
    echo "ratio by-hand / holdfast (default, training scores too): $(echo "scale=1; $a / $c" | bc)x"
fi
