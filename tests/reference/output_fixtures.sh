#!/usr/bin/env bash
# Records what the commands print on the bundled samples, so that a
# refactoring can be checked byte for byte (tests/outputs.rs). Run it only
# when an output is meant to change, and say why in the commit.
set -euo pipefail
cd "$(dirname "$0")/../.."
bin=${SKEWBOOK_BIN:-target/release/skewbook}
out=tests/fixtures/outputs
mkdir -p "$out"
: >"$out/commands.tsv"
run() { # name, args...
  local name=$1; shift
  printf '%s\t%s\n' "$name" "$*" >>"$out/commands.tsv"
  for fmt in table csv json; do
    set +e
    "$bin" "$@" --format "$fmt" >"$out/$name.$fmt" 2>/dev/null
    echo $? >"$out/$name.$fmt.status"
    set -e
  done
}
for s in hgx-2026-06-18 lhy-2026-06-18 hgx-history-2026-06; do
  run "curve-$s" curve "market-samples/$s.csv"
  run "implied-$s" implied "market-samples/$s.csv"
  run "price-$s" price "market-samples/$s.csv" --correlation "${PRICE_CORRELATION:-30}"
done
for h in hgx-default-rates lhy-default-counts; do
  run "realworld-$h" realworld "market-samples/$h.csv"
done
run "realworld-hgx-against" realworld market-samples/hgx-default-rates.csv --against market-samples/hgx-2026-06-18.csv
run "realworld-lhy-against" realworld market-samples/lhy-default-counts.csv --against market-samples/lhy-2026-06-18.csv
run "implied-kcx-2026-06-18" implied market-samples/kcx-2026-06-18.csv
for i in linear pchip; do
  run "surface-kcx-$i" surface market-samples/kcx-2026-06-18.csv --interp "$i" --step-pct 1
done
for m in none tlp; do
  run "value-kcx-$m" value market-samples/kcx-trades.csv --skew market-samples/kcx-2026-06-18.csv --pools market-samples/kcx-pools.csv --mapping "$m"
done
run "skew-history-hgx" skew-history market-samples/hgx-history-2026-06.csv --at 5,10
