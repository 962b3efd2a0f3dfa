#!/usr/bin/env bash
# The numpy/scipy references of the benchmark figures, side by side with ours:
#   tools/reference/run.sh        (needs numpy and scipy, e.g. Debian's python3-numpy python3-scipy python3-yaml; not used by tests or CI)
# The `job` figure runs `decohere run` as a process, the native build (dotnet publish -c Release src/Decohere.Cli) and the
# JIT build (dotnet build -c Release src/Decohere.Cli) in turn with run_job.py, and prints each one's median.
set -euo pipefail
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
python="${PYTHON:-python3}"
"$python" -c 'import numpy, scipy, yaml' 2>/dev/null || python=/usr/bin/python3
for script in run_covariance fit sweep shots; do (cd "$here" && "$python" "$script.py"); done
work="$(mktemp -d "${TMPDIR:-/tmp}/decohere-reference.XXXXXX")"
trap 'rm -rf "$work"' EXIT
# The demo with a 100,000-step covariance table (11 ms / 110 ns), as the job figure runs it.
sed 's/step: 10 us/step: 110 ns/' "$here/../../scenarios/demo.yaml" > "$work/demo-100k.yaml"
"$python" "$here/run_job.py" "$work/demo-100k.yaml" "$work/out" --repeat 5
dotnet run -c Release --project "$here/../Decohere.Benchmarks" -- figures covariance fit sweep shots job --python "$python"
