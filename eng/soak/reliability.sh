#!/usr/bin/env bash
# Reliability soaks (not part of CI): the CI tests of store outages, plant server faults and crashes, run at full size.
# Each kind runs one or two tests of the test projects with 'dotnet test --filter', the size given through an
# environment variable the test reads (unset, as in CI, the test keeps its small size), and prints the figures the
# tests write (counts compared, gaps, integrity checks, resident memory, times) with the outcome and the duration.
# usage: eng/soak/reliability.sh KIND...   KIND: outage | run-outage | restarts | freezes | kills | all (the five one after another)
#   outage    victoria-metrics stopped and started again under the outbox: TIEFLOW_SOAK_OUTAGE_RECORDS (900000) records
#             paced at TIEFLOW_SOAK_OUTAGE_RATE (500) records/s, 30 minutes; a rate of 0 writes as fast as it can
#   run-outage  victoria-metrics stopped and started again under 'tieflow run' (InfluxDB store with outbox): away for
#             TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS (250) windows of the demo at TIEFLOW_SOAK_RUN_OUTAGE_SPEED (1000) times
#             real time, about 7.5 minutes (the demo's week has 336 windows; the test refuses more than 296)
#   restarts  the simulator serving OPC UA stopped and started again TIEFLOW_SOAK_RESTARTS (20) times under 'tieflow run'
#   freezes   the simulator frozen (SIGSTOP, then SIGCONT) TIEFLOW_SOAK_FREEZES (5) times under 'tieflow run'
#   kills     'tieflow run' killed with SIGKILL TIEFLOW_SOAK_KILLS (10) times, SQLite store and InfluxDB store with outbox,
#             each kill a seeded random 0-500 ms after the window target (seed 9; TIEFLOW_SOAK_KILL_SEED for another)
# Each of these variables may be set beforehand to run another size. The full logs stay in $TIEFLOW_SOAK_LOGS
# (default: a new folder under /tmp, printed at the end).
set -uo pipefail
cd "$(dirname "$0")/../.."
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
export TIEFLOW_SOAK_OUTAGE_RECORDS=${TIEFLOW_SOAK_OUTAGE_RECORDS:-900000}
export TIEFLOW_SOAK_OUTAGE_RATE=${TIEFLOW_SOAK_OUTAGE_RATE:-500}
export TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS=${TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS:-250}
export TIEFLOW_SOAK_RUN_OUTAGE_SPEED=${TIEFLOW_SOAK_RUN_OUTAGE_SPEED:-1000}
export TIEFLOW_SOAK_RESTARTS=${TIEFLOW_SOAK_RESTARTS:-20}
export TIEFLOW_SOAK_FREEZES=${TIEFLOW_SOAK_FREEZES:-5}
export TIEFLOW_SOAK_KILLS=${TIEFLOW_SOAK_KILLS:-10}
logs=${TIEFLOW_SOAK_LOGS:-$(mktemp -d /tmp/tieflow-soak-XXXXXX)}
mkdir -p "$logs"

usage() { echo "usage: $0 outage|run-outage|restarts|freezes|kills|all ..." >&2; exit 2; }
[ $# -gt 0 ] || usage
kinds=()
for k in "$@"; do
  case "$k" in
    outage|run-outage|restarts|freezes|kills) kinds+=("$k") ;;
    all) kinds+=(outage run-outage restarts freezes kills) ;;
    *) echo "$0: unknown kind '$k'" >&2; usage ;;
  esac
done

needs_vm=0; needs_service=0; needs_storage=0
for k in "${kinds[@]}"; do
  case "$k" in
    outage) needs_vm=1; needs_storage=1 ;;
    kills|run-outage) needs_vm=1; needs_service=1 ;;
    *) needs_service=1 ;;
  esac
done
# The tests start victoria-metrics themselves (tests/Tieflow.Storage.Tests/Influx/VictoriaMetricsServer.cs) from the
# Debian package test.sh installs.
if [ $needs_vm = 1 ] && [ ! -x /usr/bin/victoria-metrics ]; then
  echo "$0: /usr/bin/victoria-metrics is missing: install the Debian package victoria-metrics (test.sh does, as root)" >&2
  exit 1
fi
[ $needs_storage = 1 ] && { dotnet build tests/Tieflow.Storage.Tests -v q -nologo >"$logs/build-storage.log" 2>&1 || { tail -20 "$logs/build-storage.log"; exit 1; }; }
[ $needs_service = 1 ] && { dotnet build tests/Tieflow.Service.Tests -v q -nologo >"$logs/build-service.log" 2>&1 || { tail -20 "$logs/build-service.log"; exit 1; }; }

status=0
for k in "${kinds[@]}"; do
  case "$k" in
    outage) proj=tests/Tieflow.Storage.Tests; filter="FullyQualifiedName~Tieflow.Storage.Tests.Influx.OutboxOutageTests"
            size="$TIEFLOW_SOAK_OUTAGE_RECORDS records at $TIEFLOW_SOAK_OUTAGE_RATE/s" ;;
    run-outage) proj=tests/Tieflow.Service.Tests; filter="FullyQualifiedName~Tieflow.Service.Tests.Hosting.InfluxRunOutageTests"
            size="$TIEFLOW_SOAK_RUN_OUTAGE_WINDOWS windows away at $TIEFLOW_SOAK_RUN_OUTAGE_SPEED times real time" ;;
    restarts) proj=tests/Tieflow.Service.Tests; filter="FullyQualifiedName~Tieflow.Service.Tests.Hosting.RunPlantServerRestartTests"
            size="$TIEFLOW_SOAK_RESTARTS restarts" ;;
    freezes) proj=tests/Tieflow.Service.Tests; filter="FullyQualifiedName~Tieflow.Service.Tests.Hosting.RunPlantServerFaultTests"
            size="$TIEFLOW_SOAK_FREEZES freezes" ;;
    kills) proj=tests/Tieflow.Service.Tests; filter="FullyQualifiedName~Tieflow.Service.Tests.Hosting.RunCrashTests|FullyQualifiedName~Tieflow.Service.Tests.Hosting.InfluxRunCrashTests"
            size="$TIEFLOW_SOAK_KILLS kills" ;;
  esac
  echo "== $k: $size ($(date -u +%H:%M:%S) UTC)"
  t0=$(date +%s)
  dotnet test "$proj" --no-build -nologo --filter "$filter" --logger "console;verbosity=detailed" >"$logs/$k.log" 2>&1
  rc=$?
  t=$(( $(date +%s) - t0 ))
  # The tests' own lines (the standard output messages of each test), then the outcome.
  awk '/^  (Passed|Failed) /{print; next} /Standard Output Messages:/{on=1; next} /^ *$/{on=0} on{print}' "$logs/$k.log"
  grep -E '^(Total tests|     (Passed|Failed)):' "$logs/$k.log" | tr -s ' ' | paste -sd ' ' -
  if [ $rc -ne 0 ]; then
    status=1
    echo "$k FAILED after $t s; the messages:"
    grep -A12 -E 'Error Message:' "$logs/$k.log" | head -60
  else
    echo "$k passed in $((t / 60)) min $((t % 60)) s"
  fi
done
echo "logs: $logs"
exit $status
