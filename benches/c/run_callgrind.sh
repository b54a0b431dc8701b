#!/usr/bin/env bash
# Instructions per call, counted by valgrind's callgrind (deterministic), for four rotaframe C
# functions beside hand-written C implementations of the same formulas, compiled with the same
# flags (-O3 for the x86-64-v3 target, like the Rust side). Usage: bash benches/c/run_callgrind.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
out=target/c-bench
mkdir -p "$out"
cargo build --release --locked -p rotaframe-c
native=$(cargo rustc --release --locked -p rotaframe-c --crate-type staticlib -- --print native-static-libs 2>&1 \
    | sed -n 's/.*native-static-libs: //p' | tail -n 1)
gcc -std=c99 -O3 -march=x86-64-v3 -ffp-contract=off -Wall -Wextra -Ibindings-c/include -Ibenches/c \
    benches/c/bench_callgrind.c benches/c/handwritten.c target/release/librotaframe_c.a $native -lm -o "$out/bench_callgrind"
calls=4096
printf "%-18s %14s %14s %8s\n" "function" "rotaframe Ir" "hand-written" "ratio"
for f in map_point apparent geodetic_to_ecef ecef_to_geodetic; do
    for impl in rf c; do
        valgrind --tool=callgrind --callgrind-out-file="$out/cg.$f.$impl" --collect-atstart=no --toggle-collect=bench_loop \
            "$out/bench_callgrind" "$f" "$impl" > /dev/null 2>&1
        total=$(sed -n 's/^summary: //p;s/^totals: //p' "$out/cg.$f.$impl" | head -n 1)
        eval "ir_$impl=$total"
    done
    awk -v f="$f" -v a="$ir_rf" -v b="$ir_c" -v n="$calls" 'BEGIN { printf "%-18s %14.1f %14.1f %7.2fx\n", f, a / n, b / n, a / b }'
done
