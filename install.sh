#!/usr/bin/env bash
# Installs tieflow for the current user: a framework-dependent Release build (needs the .NET 10 runtime) published
# into PREFIX/share/tieflow, started by PREFIX/bin/tieflow (and the simulated plant by PREFIX/bin/tieflow-sim): two small
# launchers that set the garbage collector's young-generation budget (DOTNET_GCgen0size, docs/service.md#memory) unless
# the environment already sets it.
# PREFIX defaults to ~/.local.
#   ./install.sh [--prefix DIR]      install or update
#   ./install.sh --uninstall         remove the build and the link
set -euo pipefail
cd "$(dirname "$0")"
prefix="$HOME/.local"
uninstall=0
while [ $# -gt 0 ]; do
  case "$1" in
    --prefix) prefix=${2:?--prefix needs a folder}; shift 2 ;;
    --uninstall) uninstall=1; shift ;;
    -h|--help) sed -n '2,6p' "$0"; exit 0 ;;
    *) echo "install.sh: unknown option $1" >&2; exit 2 ;;
  esac
done
app="$prefix/share/tieflow"
link="$prefix/bin/tieflow"
if [ "$uninstall" = 1 ]; then
  rm -f "$link" "$prefix/bin/tieflow-sim"
  rm -rf "$app"
  echo "removed $app and $link"
  exit 0
fi
command -v dotnet >/dev/null 2>&1 || { echo "install.sh: the .NET 10 SDK is needed to build (https://dot.net)" >&2; exit 1; }
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
rm -rf "$app"
dotnet publish src/Tieflow.Service/Tieflow.Service.csproj -c Release -o "$app" -nologo -v q
dotnet publish simulator/Tieflow.Simulator/Tieflow.Simulator.csproj -c Release -o "$app" -nologo -v q
mkdir -p "$prefix/bin"
launcher() {
  rm -f "$2"
  printf '#!/bin/sh\n# Written by install.sh: starts %s with a 4 MiB young-generation budget unless one is set.\nexport DOTNET_GCgen0size="${DOTNET_GCgen0size:-0x400000}"\nexec "%s" "$@"\n' "$1" "$1" > "$2"
  chmod 755 "$2"
}
launcher "$app/tieflow" "$link"
launcher "$app/tieflow-sim" "$prefix/bin/tieflow-sim"
echo "installed $("$link" --version | head -n 1) into $app; $link starts it"
case ":$PATH:" in
  *":$prefix/bin:"*) ;;
  *) echo "note: $prefix/bin is not on your PATH; add  export PATH=\"$prefix/bin:\$PATH\"  to your shell profile" ;;
esac
