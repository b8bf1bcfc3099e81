#!/usr/bin/env bash
# bench.sh: the README's performance table. Generates its input with
# `bitsift demo --lines N`, then times, on the same files in the same run,
# `wc -l` (the cost of reading the bytes), the jq pipeline for one field
# (`jq -r .host | sort | uniq -c`, what one does by hand) and
# `bitsift report -o json` (every field and pair, the deep analyses
# included) on JSON, with `--window 100000`, and on the same records as
# logfmt. With BASE=path/to/an/older/bitsift it times that binary's
# `report -o json` too, runs interleaved, for a before/after ratio.
#
# Prints medians of RUNS runs as a Markdown table, then the ratios the
# targets are stated in (× faster than jq, logfmt ÷ JSON, CPU ÷ wall), and
# the machine's load average before and after, since wall-clock figures on
# a shared machine are only as good as its load.
#
#   scripts/bench.sh [LINES] [RUNS]      (default 1000000 lines, 3 runs)
#
# lines/s, MB/s and the ratios are from the median wall time. Needs GNU
# time (/usr/bin/time) and bc; jq is optional.
set -euo pipefail
lines=${1:-1000000}
runs=${2:-3}
cd "$(dirname "$0")/.."
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT

go build -o "$dir/bitsift" .
"$dir/bitsift" demo --lines "$lines" > "$dir/demo.jsonl"
# The demo's values hold no quotes, commas or spaces, so a textual rewrite
# gives the same records as logfmt.
sed -E 's/^\{//; s/\}$//; s/"([^"]*)":"([^"]*)"/\1=\2/g; s/"([^"]*)":/\1=/g; s/,/ /g' \
  "$dir/demo.jsonl" > "$dir/demo.logfmt"

load_before=$(cut -d' ' -f1-3 /proc/loadavg)
# measure NAME FILE CMD...: runs CMD once, appends NAME, FILE, cpu, wall
# and rss, tab-separated (cpu = user + system seconds).
measure() {
  local name=$1 file=$2; shift 2
  /usr/bin/time -f "%U %S %e %M" -o "$dir/t" "$@" > /dev/null 2>&1 || true
  read -r u sy e m < "$dir/t"
  printf '%s\t%s\t%s\t%s\t%s\n' "$name" "$file" "$(echo "$u + $sy" | bc)" "$e" "$m" >> "$dir/results"
}
: > "$dir/results"
for _ in $(seq "$runs"); do
  measure "wc -l" demo.jsonl wc -l "$dir/demo.jsonl"
  if command -v jq > /dev/null; then
    measure "jq -r .host | sort | uniq -c" demo.jsonl sh -c "jq -r .host '$dir/demo.jsonl' | sort | uniq -c"
  fi
  measure "bitsift report -o json" demo.jsonl "$dir/bitsift" report -o json "$dir/demo.jsonl"
  measure "bitsift report -o json --window 100000" demo.jsonl "$dir/bitsift" report -o json --window 100000 "$dir/demo.jsonl"
  measure "bitsift report -o json --format logfmt" demo.logfmt "$dir/bitsift" report -o json --format logfmt "$dir/demo.logfmt"
  if [ -n "${BASE:-}" ]; then
    measure "before: bitsift report -o json" demo.jsonl "$BASE" report -o json "$dir/demo.jsonl"
  fi
done
load_after=$(cut -d' ' -f1-3 /proc/loadavg)

echo "input: $lines lines; $(wc -c < "$dir/demo.jsonl") bytes JSON, $(wc -c < "$dir/demo.logfmt") bytes logfmt"
echo "machine: $(nproc) cores, load average $load_before before, $load_after after; medians of $runs runs"
echo
awk -F'\t' -v lines="$lines" -v jsz="$(wc -c < "$dir/demo.jsonl")" -v lsz="$(wc -c < "$dir/demo.logfmt")" '
  { name = $1; file[name] = $2; c = ++cnt[name]; u[name, c] = $3; w[name, c] = $4; r[name, c] = $5
    if (!(name in seen)) { seen[name] = 1; order[++k] = name } }
  function median(a, name, c,   v, i, j, t) {
    for (i = 1; i <= c; i++) v[i] = a[name, i]
    for (i = 1; i <= c; i++) for (j = i + 1; j <= c; j++) if (v[j] < v[i]) { t = v[i]; v[i] = v[j]; v[j] = t }
    return c % 2 ? v[(c + 1) / 2] : (v[c / 2] + v[c / 2 + 1]) / 2 }
  END {
    for (i = 1; i <= k; i++) { nm = order[i]; mw[nm] = median(w, nm, cnt[nm]); mu[nm] = median(u, nm, cnt[nm]); mr[nm] = median(r, nm, cnt[nm]) }
    jq = mw["jq -r .host | sort | uniq -c"]
    print "| command | input | wall s | CPU s | CPU ÷ wall | lines/s | MB/s | peak RSS MB | × faster than jq |"
    print "|---|---|---:|---:|---:|---:|---:|---:|---:|"
    for (i = 1; i <= k; i++) {
      nm = order[i]; t = mw[nm] > 0 ? mw[nm] : 0.001
      sz = file[nm] ~ /logfmt/ ? lsz : jsz
      label = nm; gsub(/\|/, "\\|", label)
      printf "| `%s` | %s | %.2f | %.2f | %.2f | %.0f | %.0f | %.0f | %s |\n", label, file[nm], mw[nm], mu[nm], mu[nm] / t, lines / t, sz / 1e6 / t, mr[nm] / 1024, (jq > 0 ? sprintf("%.2f", jq / t) : "-") }
    js = mw["bitsift report -o json"]; lf = mw["bitsift report -o json --format logfmt"]; wn = mw["bitsift report -o json --window 100000"]
    print ""
    if (jq > 0) {
      printf "report -o json: %.2f× faster than jq (target ≥ 7), peak RSS %.0f MB (target ≤ 120)\n", jq / js, mr["bitsift report -o json"] / 1024
      printf "--window 100000: %.2f× faster than jq (target ≥ 5), peak RSS %.0f MB (target ≤ 80)\n", jq / wn, mr["bitsift report -o json --window 100000"] / 1024
    }
    printf "logfmt ÷ JSON wall: %.2f (target ≤ 1.3)\n", lf / js
    printf "CPU ÷ wall, report -o json: %.2f (target ≥ 1.6 on an idle machine)\n", mu["bitsift report -o json"] / js
    if ("before: bitsift report -o json" in mw) {
      b = "before: bitsift report -o json"
      printf "before ÷ after: wall %.2f, CPU %.2f, RSS %.2f\n", mw[b] / js, mu[b] / mu["bitsift report -o json"], mr[b] / mr["bitsift report -o json"]
    }
  }' "$dir/results"
