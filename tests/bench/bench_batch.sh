#!/bin/sh
# Benchmark: queries per second of `sheetwalk batch` for a stream of 10,000
# loop queries on one curve and on one expression (the function and its
# branch points are set up once and cached).  Usage: bench_batch.sh [BIN]
set -eu
bin=${1:-./build/sheetwalk}
n=${N:-10000}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
gen() {
    awk -v n="$n" -v kind="$1" -v fn="$2" 'BEGIN {
        for (i = 0; i < n; i++) {
            r = 0.3 + (i % 7) * 0.1
            printf("{\"id\": %d, \"command\": \"loop\", \"%s\": \"%s\", \"path\": \"circle 0 %.2f 16\"}\n", i, kind, fn, r)
        }
    }'
}
run() {
    label=$1
    file=$2
    start=$(date +%s.%N)
    "$bin" batch < "$file" > "$tmp/out"
    end=$(date +%s.%N)
    lines=$(wc -l < "$tmp/out")
    errors=$(grep -c '"error"' "$tmp/out" || true)
    awk -v l="$label" -v n="$lines" -v e="$errors" -v s="$start" -v t="$end" 'BEGIN {
        printf("%-40s %6d answers (%d errors) in %.3f s: %.0f queries/s\n", l, n, e, t - s, n / (t - s)) }'
}
gen curve "w^3 - w - z" > "$tmp/curve.jsonl"
gen function "z^(1/3)*(1-z)^(2/3)" > "$tmp/expr.jsonl"
run "loop on the curve w^3 - w - z" "$tmp/curve.jsonl"
run "loop on z^(1/3)*(1-z)^(2/3)" "$tmp/expr.jsonl"
