#!/bin/sh
# Measures classcert-verify on the hostile inputs (tests/src/hostile.rs):
# for each file listed in DIR/hostile.txt, the exit code, reason code,
# wall-clock seconds and peak resident memory (GNU time's %e and %M), as a
# Markdown table. The target is "< 5 s and < 512 MiB" for every input and
# "< 1 s and < 200 MiB" for random-100mb.
#
#   cargo build --release -p classcert-verifier
#   cargo run --release -p classcert-tests --bin hostile-inputs -- DIR
#   tests/hostile.sh DIR [VERIFY] [TIMEOUT_SECONDS]
#
# VERIFY defaults to $CARGO_TARGET_DIR/release/classcert-verify (or
# target/release/...). A run is stopped after TIMEOUT_SECONDS (default
# 120) and shown as such.
set -u
dir=${1:?usage: tests/hostile.sh DIR [VERIFY] [TIMEOUT_SECONDS]}
verify=${2:-${CARGO_TARGET_DIR:-target}/release/classcert-verify}
limit=${3:-120}
manifest="$dir/hostile.txt"
[ -r "$manifest" ] || { echo "no $manifest" >&2; exit 2; }
[ -x "$verify" ] || { echo "no verifier at $verify" >&2; exit 2; }
out=$(mktemp) && err=$(mktemp) || exit 2
trap 'rm -f "$out" "$err"' EXIT

echo "| input | bytes | expected | exit | reason | as expected | seconds | peak MiB | meets limits |"
echo "| --- | ---: | --- | ---: | --- | --- | ---: | ---: | --- |"
grep -v '^#' "$manifest" | while read -r file bytes expected what; do
    /usr/bin/time -o "$err" -f '%e %M' timeout "$limit" "$verify" --quiet "$dir/$file" >"$out" 2>/dev/null
    code=$?
    set -- $(tail -n 1 "$err")
    secs=${1:-?}
    kib=${2:-0}
    mib=$(( kib / 1024 ))
    case $code in
        124) reason="(stopped after ${limit} s)" ;;
        0) reason=verified ;;
        *) reason=$(sed -n '1s/^REJECTED: //p' "$out") ;;
    esac
    case $file in
        random-100mb.cert) max_s=1; max_mib=200 ;;
        *) max_s=5; max_mib=512 ;;
    esac
    ok=yes
    [ "$code" -eq 0 ] || [ "$code" -eq 1 ] || ok=no
    awk -v s="$secs" -v m="$max_s" 'BEGIN { exit !(s + 0 < m) }' || ok=no
    [ "$mib" -lt "$max_mib" ] || ok=no
    as=yes
    case $expected in
        rejected:any) [ "$code" -eq 1 ] || as=no ;;
        rejected:*) [ "$code" -eq 1 ] && [ "$reason" = "${expected#rejected:}" ] || as=no ;;
        verified-or-over-limit) [ "$reason" = verified ] || [ "$reason" = over-limit ] || as=no ;;
    esac
    echo "| $file | $bytes | $expected | $code | $reason | $as | $secs | $mib | $ok (< ${max_s} s, < ${max_mib} MiB) |"
done
