#!/usr/bin/env bash
# Checks that the native (AOT) executable computes exactly what the JIT build computes: both run the same commands
# (run with shots and trajectories, lifetime, tolerance, sweep, fit of a Parquet file, fit-noise of a CSV file) and every
# Parquet, JSON and CSV file they write must be byte for byte the same, except the lines of JSON files that say when
# they were written or how long the work took ("written_utc", "elapsed_s"). Plots are compared and reported, not
# required to match.
#   tools/check-aot-identical.sh [PUBLISHED_DIR]    (publishes to a temporary folder when none is given)
# Not part of the test suite: publishing takes minutes.
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
work="$(mktemp -d "${TMPDIR:-/tmp}/decohere-aot-check.XXXXXX")"
trap '[[ -n "${KEEP:-}" ]] || rm -rf "$work"' EXIT

aot_dir="${1:-}"
if [[ -z "$aot_dir" ]]; then
  aot_dir="$work/aot"
  dotnet publish "$root/src/Decohere.Cli" -c Release -o "$aot_dir" --nologo -v quiet > "$work/publish.log" || { cat "$work/publish.log"; exit 1; }
fi
dotnet build "$root/src/Decohere.Cli" -c Release -o "$work/jit" --nologo -v quiet > "$work/build.log" || { cat "$work/build.log"; exit 1; }
aot=("$aot_dir/decohere")
jit=(dotnet "$work/jit/decohere.dll")

# occupancy, var_i, var_q, shots: a calibration file (values made up for the check; only equality matters here)
printf 'occupancy,var_i,var_q,shots\n0.1,1.9,2.1,4000\n1,3.6,3.5,4000\n3,7.9,8.2,4000\n10,22.5,22.1,4000\n' > "$work/calibration.csv"

commands() {   # $1: output root; the rest: the program
  local out="$1"; shift
  "$@" run --out "$out/run" --trajectories 20 --quiet >/dev/null
  "$@" run "$root/scenarios/two-drums.yaml" --out "$out/two-drums" --quiet >/dev/null
  "$@" lifetime --out "$out/lifetime" --quiet >/dev/null
  "$@" tolerance --added-noise 0:3:4 --shots 500,2000 --calibration-uncertainty 0.1 --draws 400 --out "$out/tolerance" --quiet >/dev/null
  "$@" sweep --vary modes.drum.bath.temperature=5mK:50mK:5 --vary 'stages.squeeze.tones[1].coupling=5kHz:20kHz:3' \
    --metrics steady_squeezing_db,physical_lifetime --out "$out/sweep" --quiet >/dev/null
  "$@" fit "$root/scenarios/demo.yaml" --data "$out/run/shots.parquet" --no-profiles --out "$out/fit" --quiet >/dev/null
  "$@" fit-noise --data "$work/calibration.csv" --out "$out/fit-noise" --quiet >/dev/null
  "$@" check "$root/scenarios/demo.yaml" > "$out/check.txt"
}

commands "$work/out-jit" "${jit[@]}"
commands "$work/out-aot" "${aot[@]}"

status=0 compared=0 plots_differ=()
while IFS= read -r -d '' file; do
  rel="${file#"$work/out-jit/"}"
  other="$work/out-aot/$rel"
  case "$rel" in
    *.png|*.svg)
      cmp -s "$file" "$other" || plots_differ+=("$rel"); continue ;;
    *.json)
      # A manifest's byte counts follow its JSON files' timings; the files themselves are compared here.
      skip='"(written_utc|elapsed_s)"'
      [[ "$rel" == */decohere-manifest.json ]] && skip='"(written_utc|elapsed_s|bytes)"'
      if ! diff -q <(grep -Ev "$skip" "$file") <(grep -Ev "$skip" "$other") >/dev/null; then
        echo "DIFFERS: $rel"; status=1
      fi ;;
    *)
      if ! cmp -s "$file" "$other"; then echo "DIFFERS: $rel"; status=1; fi ;;
  esac
  compared=$((compared + 1))
done < <(find "$work/out-jit" -type f -print0 | sort -z)
if [[ "$(cd "$work/out-jit" && find . -type f | sort)" != "$(cd "$work/out-aot" && find . -type f | sort)" ]]; then
  echo "DIFFERS: the two builds wrote different sets of files"; status=1
fi
echo "compared $compared files (Parquet, JSON, CSV, terminal output): $([[ $status == 0 ]] && echo identical || echo DIFFERENT)"
if (( ${#plots_differ[@]} )); then echo "plots that differ (not required to match): ${plots_differ[*]}"; else echo "plots: identical"; fi
exit $status
