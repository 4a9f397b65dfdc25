#!/usr/bin/env bash
# Soak run (not part of CI): about 500 tags at 1 s through OPC UA, the analysis and the SQLite store. The simulated
# plant serves 32 copies of train X300 at real time; 'tieflow run' subscribes to every tag. Every 30 s the monitor's
# CPU share (of one core) and resident memory are printed; at the end, the mean CPU share and the largest RSS.
# usage: eng/soak/monitor-500-tags.sh [SECONDS [SPEED]]   (default 600 s at real time; SPEED 6 puts an hour of plant
# time, two balance windows per unit, into ten minutes at six times the load)
set -euo pipefail
cd "$(dirname "$0")/../.."
# The young-generation budget the systemd unit and the container image set (docs/service.md#memory); override it
# from the environment to compare.
export DOTNET_GCgen0size=${DOTNET_GCgen0size:-0x400000}
seconds=${1:-600}
speed=${2:-1}
work=$(mktemp -d); sim=; mon=
trap 'kill ${sim:-} ${mon:-} 2>/dev/null || true; rm -rf "$work"' EXIT
dotnet build -c Release src/Tieflow.Service -v q >/dev/null
dotnet build -c Release simulator/Tieflow.Simulator -v q >/dev/null
python3 eng/soak/make-wide-plant.py 32 "$work" "$(python3 -c "import sys; s=int(sys.argv[1])*int(sys.argv[2])+600; print(f'{s//86400}.{s%86400//3600:02d}:{s%3600//60:02d}:{s%60:02d}')" "$seconds" "$speed")"
port=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1])')
cat > "$work/soak.settings.json" <<JSON
{ "Tieflow": { "Plant": "wide.plant.json",
  "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://127.0.0.1:$port", "Security": "None" },
  "Store": { "Kind": "sqlite", "Path": "soak.db" }, "Health": { "Enabled": false } } }
JSON
dotnet simulator/Tieflow.Simulator/bin/Release/net10.0/linux-x64/tieflow-sim.dll run --scenario "$work/wide.scenario.json" \
  --serve "opc.tcp://127.0.0.1:$port" --speed "$speed" 2>"$work/sim.log" & sim=$!
sleep 5
dotnet src/Tieflow.Service/bin/Release/net10.0/linux-x64/tieflow.dll run --settings "$work/soak.settings.json" \
  --max-runtime "${seconds}s" >"$work/mon.out" 2>"$work/mon.log" & mon=$!
tick=$(getconf CLK_TCK)
cpu() { awk '{print $14+$15}' "/proc/$mon/stat"; }
sleep 30
kill -0 $mon 2>/dev/null || { echo "the monitor ended early:"; tail -5 "$work/mon.log"; exit 1; }
start=$(cpu); t0=$(date +%s); peak=0
while kill -0 $mon 2>/dev/null; do
  sleep 30
  kill -0 $mon 2>/dev/null || break
  now=$(cpu); t=$(date +%s); rss=$(awk '/VmRSS/ {print $2}' "/proc/$mon/status")
  [ "$rss" -gt "$peak" ] && peak=$rss
  echo "$(( t - t0 )) s: CPU $(python3 -c "print(f'{100*($now-$start)/$tick/max(1,$t-$t0):.2f}')") % of one core, RSS $((rss/1024)) MB"
  last=$now; tl=$t
done
echo "mean CPU $(python3 -c "print(f'{100*(${last:-$start}-$start)/$tick/max(1,${tl:-$t0}-$t0):.2f}')") % of one core after warm-up; peak RSS $((peak/1024)) MB"
tail -1 "$work/mon.log"
