#!/usr/bin/env bash
# Start-up time of `decohere --version` and `decohere check` (the demo scenario), JIT build against the native one:
# each command is run a few times to warm the file cache, then N times; mean ± standard deviation, min and max (ms).
#   tools/startup-times.sh [PUBLISHED_DIR] [N]     (publishes to a temporary folder when no folder is given; N = 20)
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
work="$(mktemp -d "${TMPDIR:-/tmp}/decohere-startup.XXXXXX")"
trap 'rm -rf "$work"' EXIT
aot_dir="${1:-}"
runs="${2:-20}"
if [[ -z "$aot_dir" ]]; then
  aot_dir="$work/aot"
  dotnet publish "$root/src/Decohere.Cli" -c Release -o "$aot_dir" --nologo -v quiet > "$work/publish.log" || { cat "$work/publish.log"; exit 1; }
fi
dotnet build "$root/src/Decohere.Cli" -c Release -o "$work/jit" --nologo -v quiet > "$work/build.log" || { cat "$work/build.log"; exit 1; }
scenario="$root/scenarios/demo.yaml"

measure() {   # $1: label; the rest: the command
  local label="$1"; shift
  for _ in 1 2 3; do "$@" >/dev/null 2>&1; done
  local times=()
  for ((k = 0; k < runs; k++)); do
    local start end
    start=$(date +%s%N)
    "$@" >/dev/null 2>&1
    end=$(date +%s%N)
    times+=($(( (end - start) / 1000 )))
  done
  printf '%s\n' "${times[@]}" | awk -v label="$label" -v n="$runs" '
    { t = $1 / 1000; s += t; ss += t * t; if (NR == 1 || t < lo) lo = t; if (t > hi) hi = t }
    END { m = s / n; sd = sqrt((ss - n * m * m) / (n - 1)); printf "%-28s %8.1f ± %6.1f ms   (min %7.1f, max %7.1f, %d runs)\n", label, m, sd, lo, hi, n }'
}

measure "--version   JIT" dotnet "$work/jit/decohere.dll" --version
measure "--version   native (AOT)" "$aot_dir/decohere" --version
measure "check demo  JIT" dotnet "$work/jit/decohere.dll" check "$scenario"
measure "check demo  native (AOT)" "$aot_dir/decohere" check "$scenario"
