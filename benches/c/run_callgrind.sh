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

# Instructions per strapdown step through the C interface (conversion of the plain-struct state
# in and out included). NED in the x86-64-v3 build used above, with geodetic_to_ecef of the same
# run as the yardstick.
gcc -std=c99 -O3 -march=x86-64-v3 -ffp-contract=off -Wall -Wextra -Ibindings-c/include \
    benches/c/bench_strapdown.c target/release/librotaframe_c.a $native -lm -o "$out/bench_strapdown"
step_table() { # $1 = driver, $2 = reference Ir per call, then "frame gravity" pairs
    local driver=$1 ref=$2
    shift 2
    while [ $# -gt 0 ]; do
        valgrind --tool=callgrind --callgrind-out-file="$out/cg.step.$1.$2" --collect-atstart=no --toggle-collect=bench_loop \
            "$driver" "$1" "$2" > /dev/null 2>&1
        total=$(sed -n 's/^summary: //p;s/^totals: //p' "$out/cg.step.$1.$2" | head -n 1)
        awk -v f="$1, $2 gravity" -v a="$total" -v r="$ref" 'BEGIN { printf "%-26s %14.1f %21.1fx\n", f, a / 4096, (a / 4096) / r }'
        shift 2
    done
}
ref_v3=$(sed -n 's/^summary: //p;s/^totals: //p' "$out/cg.geodetic_to_ecef.rf" | head -n 1)
ref_v3=$(awk -v r="$ref_v3" -v n="$calls" 'BEGIN { print r / n }')
printf "\n%-26s %14s %22s\n" "strapdown step (v3)" "Ir per step" "x geodetic_to_ecef"
step_table "$out/bench_strapdown" "$ref_v3" ned normal ned j2

# All four configurations in an x86-64-v2 build (SSE4.2, no AVX or FMA) of library and
# driver: valgrind 3.19 cannot decode the VEX form of one register move (vmovq) that the v3
# build of the ECEF step contains. Without hardware FMA the double-double geodesy calls a
# software fma, so v2 counts are higher throughout; compare rows within this table only.
v2=target/c-bench-v2
RUSTFLAGS="-C target-cpu=x86-64-v2" CARGO_TARGET_DIR="$v2" cargo build --release --locked -p rotaframe-c
gcc -std=c99 -O3 -march=x86-64-v2 -ffp-contract=off -Wall -Wextra -Ibindings-c/include -Ibenches/c \
    benches/c/bench_strapdown.c "$v2/release/librotaframe_c.a" $native -lm -o "$out/bench_strapdown_v2"
gcc -std=c99 -O3 -march=x86-64-v2 -ffp-contract=off -Wall -Wextra -Ibindings-c/include -Ibenches/c \
    benches/c/bench_callgrind.c benches/c/handwritten.c "$v2/release/librotaframe_c.a" $native -lm -o "$out/bench_callgrind_v2"
valgrind --tool=callgrind --callgrind-out-file="$out/cg.v2.geodetic_to_ecef" --collect-atstart=no --toggle-collect=bench_loop \
    "$out/bench_callgrind_v2" geodetic_to_ecef rf > /dev/null 2>&1
ref_v2=$(sed -n 's/^summary: //p;s/^totals: //p' "$out/cg.v2.geodetic_to_ecef" | head -n 1)
ref_v2=$(awk -v r="$ref_v2" -v n="$calls" 'BEGIN { print r / n }')
printf "\n%-26s %14s %22s\n" "strapdown step (v2)" "Ir per step" "x geodetic_to_ecef"
step_table "$out/bench_strapdown_v2" "$ref_v2" ned normal ned j2 ecef normal ecef j2
printf "%-26s %14.1f\n" "geodetic_to_ecef (v2)" "$ref_v2"
