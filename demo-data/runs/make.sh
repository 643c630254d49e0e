#!/usr/bin/env bash
# Remakes the Monte Carlo demo: eight runs of each imaginary tracker over the same harbour
# scene (demo-data/truth.csv), one file per tracker with a `run` column.
# From the repository's root: bash demo-data/runs/make.sh [switchyard binary] [output folder]
set -euo pipefail
switchyard=${1:-target/release/switchyard}
out=${2:-demo-data/runs}
scratch=$(mktemp -d)
trap 'rm -rf "$scratch"' EXIT
for tracker in swaps fragments; do
    echo "run,time,id,x,y" > "$scratch/all.csv"
    for run in 1 2 3 4 5 6 7 8; do
        "$switchyard" synth --preset harbour --seed 1 --tracker "$tracker" \
            --tracker-seed $((100 + run)) --estimate-out "$scratch/run.csv"
        tail -n +2 "$scratch/run.csv" | sed "s/^/$run,/" >> "$scratch/all.csv"
    done
    mv "$scratch/all.csv" "$out/tracker-$tracker.csv"
done
