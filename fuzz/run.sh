#!/usr/bin/env bash
# Runs every fuzz target in turn (one libFuzzer process at a time), then minimises its corpus.
#   fuzz/run.sh [seconds per target, default 240] [target ...]
# Needs cargo-fuzz (`cargo install cargo-fuzz --locked`). On a stable toolchain the nightly-only
# flags cargo-fuzz passes are enabled with RUSTC_BOOTSTRAP=1.
set -euo pipefail
cd "$(dirname "$0")"
secs="${1:-240}"
shift || true
targets=("$@")
[ "${#targets[@]}" -gt 0 ] || targets=(wav csv_waveform uff58_ascii uff58_binary manifest plant_file plant_values)
export RUSTC_BOOTSTRAP=1
mkdir -p logs
for t in "${targets[@]}"; do
    dict="dict/$t.dict"
    features=()
    case "$t" in uff58_*) dict=dict/uff58.dict ;; plant_file|plant_values) features=(--features plant) ;; esac
    mkdir -p "corpus/$t" "artifacts/$t"
    echo "== $t: ${secs} s"
    # (cmin keeps one input per covered edge, -use_counters=0, so the committed corpus stays small.)
    # Allocation is bounded by the input: inputs stay small (-max_len) while a 256 MiB allocation or
    # a 512 MiB resident set is reported as a crash.
    cargo fuzz run -O -a "${features[@]}" "$t" "corpus/$t" -- \
        -dict="$dict" -max_len=65536 -rss_limit_mb=512 -malloc_limit_mb=256 -timeout=10 \
        -max_total_time="$secs" -print_final_stats=1 \
        2>&1 | tee "logs/$t.log" | grep -E "^(#[0-9]+\s+DONE|stat::|==[0-9]+==|SUMMARY|Done|INFO: -max_total_time)" || true
    cargo fuzz cmin -O -a "${features[@]}" "$t" "corpus/$t" -- -use_counters=0 -rss_limit_mb=512 -malloc_limit_mb=256 >"logs/$t.cmin.log" 2>&1 || true
    echo "   corpus after cmin: $(ls "corpus/$t" | wc -l) files, $(du -sb "corpus/$t" | cut -f1) bytes"
done
