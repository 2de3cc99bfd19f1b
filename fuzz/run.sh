#!/usr/bin/env bash
# Fuzzes the verifier for a fixed time per target, seeded from vectors/.
#   fuzz/run.sh [SECONDS] [TARGET...]   default: 60 seconds, targets decode verify
# Needs the nightly toolchain and cargo-fuzz (`cargo install cargo-fuzz`).
# Each target runs with libFuzzer's limits set to the verifier's promise:
# 5 s and 512 MiB per input. A crash, timeout or out-of-memory input lands
# in fuzz/artifacts/<target>/; turn it into a regression vector (see
# vectors/README.md) before fixing it. The summary line per target gives
# executions, coverage (libFuzzer's edge count) and findings.
set -euo pipefail
cd "$(dirname "$0")"
secs="${1:-60}"
shift || true
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(decode verify)
for t in "${targets[@]}"; do
  mkdir -p "corpus/$t" "artifacts/$t"
  # seeds: every stored certificate, honest and forged
  find ../vectors -name '*.cert' -exec cp -n {} "corpus/$t/" \;
  log="artifacts/$t.log"
  # No sanitizer: our crates forbid unsafe code, and without one the
  # 512 MiB limit measures the verifier, not ASan's shadow and quarantine
  # (with ASan the process passes 512 MiB on harmless inputs).
  cargo +nightly fuzz run --sanitizer none "$t" "corpus/$t" -- \
    -max_total_time="$secs" -timeout=5 -rss_limit_mb=512 -malloc_limit_mb=512 \
    -max_len=1048576 -print_final_stats=1 -artifact_prefix="artifacts/$t/" \
    >"$log" 2>&1 || true
  execs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$log" | grep -o '[0-9]*$' | tail -1)
  cov=$(grep -o 'cov: [0-9]*' "$log" | tail -1 | grep -o '[0-9]*')
  found=$(find "artifacts/$t" -type f | wc -l)
  echo "$t: ${secs} s, ${execs:-?} executions, coverage ${cov:-?} edges, ${found} findings (log: fuzz/$log)"
done
