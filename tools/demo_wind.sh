#!/usr/bin/env bash
# Demo: the low-resolution cosmic-ray streaming wind of problems/wind, then a movie
# and the loading factors.
#
#   tools/demo_wind.sh [RUN_DIR]          (default runs/wind_streaming_lowres in the repository)
#
# Runs on 2 MPI ranks when mpi4py and mpiexec are installed (pip install -e ".[mpi]" mpich),
# else on one core (about twice as long).  NP=4 tools/demo_wind.sh uses 4 ranks.
set -euo pipefail
if [ $# -ge 1 ]; then
    case "$1" in /*) RUN=$1 ;; *) RUN=$PWD/$1 ;; esac
else
    RUN=runs/wind_streaming_lowres
fi
cd "$(dirname "$0")/.."
NP=${NP:-2}
PROBLEM=problems/wind/streaming_lowres.yaml

if [ -e "$RUN/status.json" ]; then
    echo "demo_wind: $RUN exists; remove it or give another run directory" >&2
    exit 2
fi
if command -v mpiexec >/dev/null 2>&1 && python -c "import mpi4py" >/dev/null 2>&1 \
        && [ "$NP" -gt 1 ]; then
    mpiexec -n "$NP" wind2d run "$PROBLEM" --out "$RUN"
else
    echo "demo_wind: mpi4py or mpiexec not found, running on one core" >&2
    wind2d run "$PROBLEM" --out "$RUN"
fi
wind2d movie "$RUN" --field rho --field T --field Pc --log --arrows --fieldlines \
    --out "$RUN/wind.mp4"
wind2d summary "$RUN" --from "50 Myr"
wind2d summary "$RUN" --from "50 Myr" --json > "$RUN/loading.json"
echo "demo_wind: movie $RUN/wind.mp4, loading factors $RUN/loading.json"
