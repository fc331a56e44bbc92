#!/usr/bin/env bash
# Every benchmark in its quick mode: tiny inputs, one run each, no timing asserted. It checks that
# the benchmarks still run as users would run them (CI calls it after the tests); the figures of a
# quick run mean nothing, run a benchmark without --quick for those (DEVELOPERS.md).
set -euo pipefail
cd "$(dirname "$0")/.."
for b in bench_z bench_read bench_generalized bench_uncertainty bench_workbook bench_month bench_correct bench_fleet bench_balance; do
    echo "== benchmarks/$b.py --quick"
    python "benchmarks/$b.py" --quick
done
echo "== reference comparison (pyaga8), quick"
python benchmarks/bench_z.py --quick --reference-only --methods aga8-detail,gerg-2008
