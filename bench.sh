#!/usr/bin/env bash
# Prove and verify the benchmark discriminants; prints a Markdown table of
# medians over RUNS runs (wall time from /usr/bin/time, peak RSS in MiB).
#   ./bench.sh [--real] [RUNS] [DIGITS...]   e.g. ./bench.sh 3 20 30 40
#   --real: real quadratic fields of prime discriminant D > 0
#   ./bench.sh --fields [RUNS]: number fields of degree 3 to 6 (a fixed list)
#   ./bench.sh --table [--with-80] [RUNS]: the fixed table of BENCHMARKS.md,
#     imaginary 30 40 50 60 70 (and 80 with --with-80, which takes about an
#     hour per run), then real 30 40 50
set -euo pipefail
cd "$(dirname "$0")"
if [ "${1:-}" = "--table" ]; then
  shift
  sizes="30 40 50 60 70"
  if [ "${1:-}" = "--with-80" ]; then sizes="$sizes 80"; shift; fi
  runs=${1:-3}
  "$0" "$runs" $sizes
  echo
  "$0" --real "$runs" 30 40 50
  exit 0
fi
if [ "${1:-}" = "--fields" ]; then
  # number fields: a fixed list of polynomials, degrees 3 to 6
  shift
  runs=${1:-3}
  cargo build --release -q -p classcert-prover -p classcert-verifier
  tmp=$(mktemp -d)
  median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
  echo "| degree | F | signature | \\|Δ\\| | class group | prove s (median of $runs) | verify s | verify/prove | certificate bytes | prove peak MiB |"
  echo "|---|---|---|---|---|---|---|---|---|---|"
  while IFS= read -r f; do
    : > "$tmp/p"; : > "$tmp/v"
    for _ in $(seq "$runs"); do
      /usr/bin/time -f "%e %M" -o "$tmp/t" ./target/release/classcert prove --polynomial "$f" -o "$tmp/c.cert" -q >/dev/null
      cat "$tmp/t" >> "$tmp/p"
      /usr/bin/time -f "%e %M" -o "$tmp/t" ./target/release/classcert-verify "$tmp/c.cert" >/dev/null
      cat "$tmp/t" >> "$tmp/v"
    done
    ps=$(cut -d' ' -f1 "$tmp/p" | median); pm=$(cut -d' ' -f2 "$tmp/p" | median)
    vs=$(cut -d' ' -f1 "$tmp/v" | median)
    facts=$(./target/release/classcert-verify "$tmp/c.cert" --json | python3 -c 'import json,sys; d=json.load(sys.stdin); print(d["degree"], "(%d, %d)" % tuple(d["signature"]), d["field_discriminant"].lstrip("-"), " x ".join("Z/"+i for i in d["invariants"]) or "trivial", sep="|")')
    deg=${facts%%|*}; rest=${facts#*|}
    echo "| $deg | \`$f\` | ${rest//|/ | } | $ps | $vs | $(awk "BEGIN {printf \"%.3f\", $vs / $ps}") | $(stat -c %s "$tmp/c.cert") | $((pm / 1024)) |"
  done <<'LIST'
x^3 - 2
x^3 - 70
x^3 - 10007
x^3 - 192449
x^3 - 192451
x^3 - 7000*x + 11
x^4 - 10*x^2 + 1
x^4 + 1
x^5 + x^4 - 4*x^3 - 3*x^2 + 3*x + 1
x^5 - x - 1
x^6 + x^5 - 5*x^4 - 4*x^3 + 6*x^2 + 3*x - 1
x^6 + x^5 + 17
x^6 - 3*x^5 + 7
LIST
  rm -r "$tmp"
  exit 0
fi
kind=""
if [ "${1:-}" = "--real" ]; then kind=real; shift; fi
runs=${1:-3}; shift || true
digits=${*:-20 30}
cargo build --release -q -p classcert-prover -p classcert-verifier --bins --examples
tmp=$(mktemp -d)
median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
echo "| digits | D | prove s (median of $runs) | verify s | verify/prove | certificate bytes | factor base | eliminations | raw relations | dense block | prove peak MiB | verify peak MiB | threads |"
echo "|---|---|---|---|---|---|---|---|---|---|---|---|---|"
fits=""
for n in $digits; do
  d=$(./target/release/examples/bench_d "$n" $kind)
  : > "$tmp/p"; : > "$tmp/v"
  for _ in $(seq "$runs"); do
    /usr/bin/time -f "%e %M" -o "$tmp/t" ./target/release/classcert prove -o "$tmp/c.cert" -q --force -- "$d" >/dev/null
    cat "$tmp/t" >> "$tmp/p"
    /usr/bin/time -f "%e %M" -o "$tmp/t" ./target/release/classcert-verify "$tmp/c.cert" >/dev/null
    cat "$tmp/t" >> "$tmp/v"
  done
  ps=$(cut -d' ' -f1 "$tmp/p" | median); pm=$(cut -d' ' -f2 "$tmp/p" | median)
  vs=$(cut -d' ' -f1 "$tmp/v" | median); vm=$(cut -d' ' -f2 "$tmp/v" | median)
  size=$(stat -c %s "$tmp/c.cert")
  ratio=$(awk -v a="$vs" -v b="$ps" 'BEGIN {printf "%.3f", (b > 0 ? a / b : 0)}')
  read -r fb el raw block < <(./target/release/examples/cert_stats "$tmp/c.cert")
  echo "| $n | $d | $ps | $vs | $ratio | $size | $fb | $el | $raw | $block | $((pm / 1024)) | $((vm / 1024)) | $(nproc) |"
  fits="$fits $d:$ps"
done
rm -rf "$tmp"
# Least-squares fit of ln T = a + c sqrt(ln|D| ln ln|D|), the shape L(1/2, c)
# of subexponential relation search, over the rows above.
echo "$fits" | tr ' ' '\n' | awk -F: 'NF == 2 && $2 > 0 {
  d = $1; sub(/^-/, "", d); l = length(d) * log(10); s = sqrt(l * log(l));
  n++; sx += s; sy += log($2); sxx += s * s; sxy += s * log($2)
} END {
  if (n >= 2 && n * sxx - sx * sx > 0) {
    c = (n * sxy - sx * sy) / (n * sxx - sx * sx); a = (sy - c * sx) / n
    printf "\nfit over %d sizes: prove time = exp(%.3f + %.3f sqrt(ln|D| ln ln|D|)) s, i.e. L(1/2, c) with c = %.3f\n", n, a, c, c
  }
}'
