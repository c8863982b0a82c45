#!/usr/bin/env bash
# Benchmarks of the audit. Prints figures; asserts nothing.
#   scripts/bench.sh            demo staff and a staff 10x larger
#   scripts/bench.sh league     also the league-scale log (768 pitchers, 1.6M pitches)
#   scripts/bench.sh realistic  also the realistic league (32 clubs, ~1,400 pitchers, 1.5M pitches)
#   scripts/bench.sh ingest     also a 10-million-row CSV ingest
#   scripts/bench.sh notebook   also the analyst's notebooks (benches/notebook: season-forward, rolling) on the demo, and the ratios
#   scripts/bench.sh compare    also compare of the demo's and the realistic league's two seasons
set -euo pipefail
cd "$(dirname "$0")/.."
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-/var/tmp/tellscope-target}"
cargo build --release --quiet
BIN="$CARGO_TARGET_DIR/release/tellscope"
WORK="${BENCH_DIR:-/var/tmp/tellscope-bench}"
mkdir -p "$WORK"

echo "machine: $(nproc) cores, $(awk '/MemTotal/ {printf "%.0f GiB", $2/1048576}' /proc/meminfo), $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
echo "threads: ${RAYON_NUM_THREADS:-all cores}"

# run LABEL ARGS... : wall seconds, peak RSS, permutations per second
run() {
    local label="$1"; shift
    local out="$WORK/$label"
    rm -rf "$out"
    /usr/bin/time -v -o "$WORK/$label.time" "$BIN" "$@" --out "$out" > "$WORK/$label.stdout"
    local wall rss perms
    wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$WORK/$label.time")
    rss=$(awk -F': ' '/Maximum resident set size/ {printf "%.0f", $2/1024}' "$WORK/$label.time")
    # Refits of both permutation tests (each a whole rolling fit, up to
    # five folds); compare's summary counts its label swaps.
    perms=$(python3 -c "import json,sys; s=json.load(open('$out/summary.json')); print(sum((p.get('permutations') or 0) + (p.get('beyond_permutations') or 0) + ((p.get('predictability') or {}).get('permutations') or 0) for p in s['pitchers']))")
    python3 - "$label" "$wall" "$rss" "$perms" <<'PY'
import sys
label, wall, rss, perms = sys.argv[1], float(sys.argv[2]), sys.argv[3], int(sys.argv[4])
print(f"{label:<22} wall {wall:7.2f} s   peak RSS {rss:>6} MiB   permutation refits {perms:>7}   {perms / wall:9.0f} refits/s")
PY
}

# The demo is short enough for the machine's minute-to-minute speed to
# show, so it is run DEMO_RUNS times (after one warm-up) and the median and
# best wall times are printed besides the last run's line.
"$BIN" audit demo-data/demo-log.csv --permutations 999 --out "$WORK/demo-warm" > /dev/null
walls=()
for _ in $(seq "${DEMO_RUNS:-9}"); do
    run demo audit demo-data/demo-log.csv --permutations 999 > "$WORK/demo.line"
    walls+=("$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$WORK/demo.time")")
done
cat "$WORK/demo.line"
python3 - "${walls[@]}" <<'PY'
import statistics, sys
w = sorted(float(x) for x in sys.argv[1:])
print(f"demo over {len(w)} runs     median {statistics.median(w):.2f} s   best {w[0]:.2f} s   worst {w[-1]:.2f} s")
PY

if [ ! -f "$WORK/staff10x.csv" ]; then
    "$BIN" simulate benches/scenarios/staff10x.toml --out "$WORK/staff10x.csv" --seed 1 > /dev/null
fi
run staff-10x audit "$WORK/staff10x.csv" --permutations 999

if [ "${1:-}" = "league" ] || [ "${1:-}" = "all" ]; then
    if [ ! -f "$WORK/league.csv" ]; then
        "$BIN" simulate tests/fixtures/scenarios/league.toml --out "$WORK/league.csv" --seed 1 > /dev/null
    fi
    run league audit "$WORK/league.csv" --permutations 999
fi

if [ "${1:-}" = "realistic" ] || [ "${1:-}" = "all" ]; then
    if [ ! -f "$WORK/realistic-league.csv" ]; then
        "$BIN" simulate tests/fixtures/scenarios/realistic_league.toml --out "$WORK/realistic-league.csv" --seed 1 > /dev/null
    fi
    run realistic-league audit "$WORK/realistic-league.csv" --permutations 999
fi

if [ "${1:-}" = "ingest" ] || [ "${1:-}" = "all" ]; then
    if [ ! -f "$WORK/ten-million.csv" ]; then
        # The league log repeated until 10M rows, each repetition two
        # seasons later with its own game ids (the same games on the same
        # dates would be copies, and the check drops copies).
        [ -f "$WORK/league.csv" ] || "$BIN" simulate tests/fixtures/scenarios/league.toml --out "$WORK/league.csv" --seed 1 > /dev/null
        python3 - "$WORK/league.csv" "$WORK/ten-million.csv" <<'PY'
import sys
src, dst = sys.argv[1], sys.argv[2]
lines = open(src).read().splitlines()
head, body = lines[0], lines[1:]
with open(dst, "w") as f:
    f.write(head + "\n")
    n, rep = 0, 0
    while n < 10_000_000:
        for l in body:
            game, date, season, rest = l.split(",", 3)
            year = int(date[:4]) + 2 * rep
            f.write(f"R{rep}-{game},{year}{date[4:]},{int(season) + 2 * rep},{rest}\n")
            n += 1
            if n >= 10_000_000:
                break
        rep += 1
PY
    fi
    /usr/bin/time -v -o "$WORK/ingest.time" "$BIN" check "$WORK/ten-million.csv" > /dev/null
    wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$WORK/ingest.time")
    rss=$(awk -F': ' '/Maximum resident set size/ {printf "%.0f", $2/1024}' "$WORK/ingest.time")
    echo "ingest 10M rows         wall $wall s   peak RSS $rss MiB"
fi

if [ "${1:-}" = "notebook" ] || [ "${1:-}" = "all" ]; then
    # The analyst's notebooks (pandas + scikit-learn, 999 label
    # permutations, Fisher tells) against the demo's median above: the
    # simpler season-forward audit (issue 19's yardstick) and the same
    # rolling evaluation tellscope does (issue 13's; about 3.5 minutes).
    for nb in season_forward_audit rolling_audit; do
        wall=$(python3 "benches/notebook/$nb.py" demo-data/demo-log.csv | awk '/^wall/ {print $2}')
        python3 - "$nb" "$wall" "${walls[@]}" <<'PY'
import statistics, sys
name, nb = sys.argv[1], float(sys.argv[2]); med = statistics.median(float(x) for x in sys.argv[3:])
print(f"{name + ' on the demo':<32} wall {nb:7.2f} s   tellscope median {med:.2f} s   {nb / med:.1f}x")
PY
    done
fi

if [ "${1:-}" = "compare" ] || [ "${1:-}" = "all" ]; then
    run demo-compare compare demo-data/demo-log.csv --before 2025 --after 2026
    if [ ! -f "$WORK/realistic-league.csv" ]; then
        "$BIN" simulate tests/fixtures/scenarios/realistic_league.toml --out "$WORK/realistic-league.csv" --seed 1 > /dev/null
    fi
    run realistic-compare compare "$WORK/realistic-league.csv" --before 2025 --after 2026
fi
