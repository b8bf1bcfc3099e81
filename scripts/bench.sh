#!/usr/bin/env bash
# bench.sh: the README's performance table. Generates its input with
# `bitsift demo --lines N`, then times, on the same files in the same run,
# `wc -l` (the cost of reading the bytes), the jq pipeline for one field
# (`jq -r .host | sort | uniq -c`, what one does by hand) and
# `bitsift report` (every field and pair) on JSON and on the same records
# as logfmt. Prints medians of RUNS runs as a Markdown table, and the
# machine's load average, since wall-clock figures on a shared machine are
# only as good as its load.
#
#   scripts/bench.sh [LINES] [RUNS]      (default 1000000 lines, 5 runs)
#
# lines/s, MB/s and the ratios are from the median wall time. Needs GNU
# time (/usr/bin/time) and bc; jq is optional.
set -euo pipefail
lines=${1:-1000000}
runs=${2:-5}
cd "$(dirname "$0")/.."
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT

go build -o "$dir/bitsift" .
"$dir/bitsift" demo --lines "$lines" > "$dir/demo.jsonl"
# The demo's values hold no quotes, commas or spaces, so a textual rewrite
# gives the same records as logfmt.
sed -E 's/^\{//; s/\}$//; s/"([^"]*)":"([^"]*)"/\1=\2/g; s/"([^"]*)":/\1=/g; s/,/ /g' \
  "$dir/demo.jsonl" > "$dir/demo.logfmt"

# measure NAME FILE CMD...: runs CMD RUNS times, appends
# "NAME FILE cpu wall rss" lines (cpu = user + system seconds).
measure() {
  local name=$1 file=$2; shift 2
  for _ in $(seq "$runs"); do
    /usr/bin/time -f "%U %S %e %M" -o "$dir/t" "$@" > /dev/null 2>&1 || true
    read -r u sy e m < "$dir/t"
    echo "$name $file $(echo "$u + $sy" | bc) $e $m" >> "$dir/results"
  done
}
: > "$dir/results"
measure "wc -l" demo.jsonl wc -l "$dir/demo.jsonl"
if command -v jq > /dev/null; then
  measure "jq -r .host | sort | uniq -c" demo.jsonl sh -c "jq -r .host '$dir/demo.jsonl' | sort | uniq -c"
fi
measure "bitsift report" demo.jsonl "$dir/bitsift" report "$dir/demo.jsonl"
measure "bitsift report --format logfmt" demo.logfmt "$dir/bitsift" report --format logfmt "$dir/demo.logfmt"

echo "input: $lines lines; $(wc -c < "$dir/demo.jsonl") bytes JSON, $(wc -c < "$dir/demo.logfmt") bytes logfmt"
echo "machine: $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg) (after the runs); medians of $runs runs"
echo
echo "| command | input | wall s | CPU s | lines/s | MB/s | peak RSS MB | × wc -l | × jq |"
echo "|---|---|---:|---:|---:|---:|---:|---:|---:|"
awk -v lines="$lines" -v jsz="$(wc -c < "$dir/demo.jsonl")" -v lsz="$(wc -c < "$dir/demo.logfmt")" '
  { n = NF; name = $1; for (i = 2; i <= n - 4; i++) name = name " " $i
    file[name] = $(n-3); u[name, ++cnt[name]] = $(n-2); w[name, cnt[name]] = $(n-1); r[name, cnt[name]] = $n
    if (!(name in seen)) { seen[name] = 1; order[++k] = name } }
  function median(a, name, c,   v, i, j, t) {
    for (i = 1; i <= c; i++) v[i] = a[name, i]
    for (i = 1; i <= c; i++) for (j = i + 1; j <= c; j++) if (v[j] < v[i]) { t = v[i]; v[i] = v[j]; v[j] = t }
    return c % 2 ? v[(c + 1) / 2] : (v[c / 2] + v[c / 2 + 1]) / 2 }
  END {
    for (i = 1; i <= k; i++) { nm = order[i]; mw[nm] = median(w, nm, cnt[nm]); mu[nm] = median(u, nm, cnt[nm]); mr[nm] = median(r, nm, cnt[nm]) }
    wc = mw["wc -l"]; jq = mw["jq -r .host | sort | uniq -c"]
    for (i = 1; i <= k; i++) {
      nm = order[i]; t = mw[nm] > 0 ? mw[nm] : 0.001
      sz = file[nm] ~ /logfmt/ ? lsz : jsz
      label = nm; gsub(/\|/, "\\|", label)
      printf "| `%s` | %s | %.2f | %.2f | %.0f | %.0f | %.0f | %.1f | %s |\n", label, file[nm], mw[nm], mu[nm], lines / t, sz / 1e6 / t, mr[nm] / 1024, t / (wc > 0 ? wc : 0.001), (jq > 0 ? sprintf("%.2f", t / jq) : "-") }
  }' "$dir/results"
