#!/usr/bin/env bash
# The numpy/scipy references of the benchmark figures, side by side with ours:
#   tools/reference/run.sh        (needs numpy and scipy, e.g. Debian's python3-numpy python3-scipy; not used by tests or CI)
set -euo pipefail
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
python="${PYTHON:-python3}"
"$python" -c 'import numpy, scipy' 2>/dev/null || python=/usr/bin/python3
for script in run_covariance fit sweep shots; do (cd "$here" && "$python" "$script.py"); done
dotnet run -c Release --project "$here/../Decohere.Benchmarks" -- figures covariance fit sweep shots
