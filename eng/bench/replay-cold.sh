#!/usr/bin/env bash
# Cold replay throughput as a user gets it: every `tieflow replay` is a new process, so the figure is history rows per
# second of the process's CPU time (user + system, startup, JIT, parsing and analysis included), not the warm in-process
# figure of `dotnet run -c Release --project tests/Tieflow.Bench -- replay`.
# It publishes the monitor and the simulator twice, as install.sh does (ReadyToRun) and plainly (JIT only), simulates the
# two-day clean demo history once (config-samples/scenarios/clean.scenario.json), then runs `tieflow replay` on it N times
# per build, alternating the builds, and prints per run the CPU time, the rate and the load average (the machine may be
# shared: compare alternating runs, not figures from different hours). DOTNET_GCgen0size is set as the launchers of
# install.sh set it, unless the environment sets it. Linux on x64 only (a linux-x64 publish, /proc/loadavg); needs bc.
#   eng/bench/replay-cold.sh [-n N] [--dir DIR] [--r2r FOLDER] [--jit FOLDER]
#     -n N          runs per build (default 5)
#     --dir DIR     work folder for the publishes and the history (default: a new temporary folder, removed at the end)
#     --r2r FOLDER  use this published folder (tieflow and tieflow-sim) as the ReadyToRun build instead of publishing
#     --jit FOLDER  the same for the plain build
set -euo pipefail
cd "$(dirname "$0")/../.."
root=$PWD
runs=5 dir="" r2r="" jit=""
while [ $# -gt 0 ]; do
  case "$1" in
    -n) runs=${2:?-n needs a count}; shift 2 ;;
    --dir) dir=${2:?--dir needs a folder}; shift 2 ;;
    --r2r) r2r=${2:?--r2r needs a folder}; shift 2 ;;
    --jit) jit=${2:?--jit needs a folder}; shift 2 ;;
    -h|--help) sed -n '2,14p' "$0"; exit 0 ;;
    *) echo "replay-cold.sh: unknown option $1" >&2; exit 2 ;;
  esac
done
if [ -z "$dir" ]; then
  dir=$(mktemp -d)
  trap 'rm -rf "$dir"' EXIT
fi
mkdir -p "$dir"
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_GCgen0size="${DOTNET_GCgen0size:-0x400000}"

publish() { # publish FOLDER READYTORUN
  for project in src/Tieflow.Service/Tieflow.Service.csproj simulator/Tieflow.Simulator/Tieflow.Simulator.csproj; do
    dotnet publish "$project" -c Release -r linux-x64 --self-contained false -p:PublishReadyToRun="$2" -o "$1" -nologo -v q >&2
  done
}
if [ -z "$r2r" ]; then r2r="$dir/r2r"; echo "publishing the ReadyToRun build into $r2r" >&2; publish "$r2r" true; fi
if [ -z "$jit" ]; then jit="$dir/jit"; echo "publishing the plain build into $jit" >&2; publish "$jit" false; fi

history="$dir/history.csv" labs="$dir/labs.csv"
if [ ! -s "$history" ]; then
  echo "simulating the clean two-day history into $history" >&2
  "$jit/tieflow-sim" run --scenario "$root/config-samples/scenarios/clean.scenario.json" --history "$history" --labs "$labs" 2>/dev/null
fi
rows=$(( $(wc -l < "$history") - 1 ))   # less the header line
echo "history: $rows rows, $(( $(stat -c %s "$history") / 1000000 )) MB; $(nproc) cores; DOTNET_GCgen0size=$DOTNET_GCgen0size"

TIMEFORMAT='%U %S %R'
replay() { # replay FOLDER: writes "user system wall" of the process to $dir/replay.time
  { time "$1/tieflow" replay --plant "$root/config-samples/brackenmoor.plant.json" --history "$history" --labs "$labs" \
      > /dev/null 2> "$dir/replay.err"; } 2> "$dir/replay.time" \
    || { echo "replay-cold.sh: tieflow replay of $1 failed:" >&2; cat "$dir/replay.err" >&2; exit 1; }
}
declare -A all=()
printf '%-5s %3s %8s %8s %6s  %s\n' build run "CPU s" "M rows/s" "wall s" "load average (1, 5, 15 min)"
for ((i = 1; i <= runs; i++)); do
  for build in r2r jit; do
    folder=$r2r; [ "$build" = jit ] && folder=$jit
    replay "$folder"
    read -r user sys wall < "$dir/replay.time"
    cpu=$(echo "$user + $sys" | bc -l)
    rate=$(echo "$rows / $cpu / 1000000" | bc -l)
    all[$build]+="$rate "
    printf '%-5s %3d %8.2f %8.2f %6.2f  %s\n' "$build" "$i" "$cpu" "$rate" "$wall" "$(cut -d ' ' -f 1-3 /proc/loadavg)"
  done
done
for build in r2r jit; do
  # shellcheck disable=SC2086
  printf '%s: M rows per CPU s, median %s, range %s\n' "$build" \
    "$(printf '%s\n' ${all[$build]} | sort -g | awk '{ a[NR] = $1 } END { printf "%.2f", NR % 2 ? a[(NR + 1) / 2] : (a[NR / 2] + a[NR / 2 + 1]) / 2 }')" \
    "$(printf '%s\n' ${all[$build]} | sort -g | awk 'NR == 1 { lo = $1 } { hi = $1 } END { printf "%.2f-%.2f", lo, hi }')"
done
