#!/usr/bin/env bash
# Installs tieflow for the current user: a framework-dependent Release build (needs the .NET 10 runtime) published
# into PREFIX/share/tieflow, started by PREFIX/bin/tieflow (and the simulated plant by PREFIX/bin/tieflow-sim): two small
# launchers that set the garbage collector's young-generation budget (DOTNET_GCgen0size, docs/service.md#memory) unless
# the environment already sets it. The build is for this machine's runtime identifier (linux-x64, linux-arm64, osx-x64,
# osx-arm64) and compiled ahead of time (ReadyToRun) so that a command starts with less JIT; where that compilation is
# not available the plain build is installed instead. PREFIX defaults to ~/.local.
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
    -h|--help) sed -n '2,9p' "$0"; exit 0 ;;
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
case "$(uname -s)-$(uname -m)" in
  Linux-x86_64) rid=linux-x64 ;;
  Linux-aarch64|Linux-arm64) rid=linux-arm64 ;;
  Darwin-x86_64) rid=osx-x64 ;;
  Darwin-arm64) rid=osx-arm64 ;;
  *) echo "install.sh: no build for $(uname -s) $(uname -m); run it with  dotnet run --project src/Tieflow.Service -- ARGS" >&2; exit 1 ;;
esac
rm -rf "$app"
publish() { # publish PROJECT [MSBUILD PROPERTY...]
  local project=$1; shift
  dotnet publish "$project" -c Release -r "$rid" --self-contained false -o "$app" -nologo -v q "$@"
}
for project in src/Tieflow.Service/Tieflow.Service.csproj simulator/Tieflow.Simulator/Tieflow.Simulator.csproj; do
  # ReadyToRun needs the crossgen2 package for this runtime identifier from a NuGet feed; without it, the plain build.
  if ! publish "$project" -p:PublishReadyToRun=true; then
    echo "install.sh: the ReadyToRun build of $project failed (above); installing the plain build, which starts slower" >&2
    publish "$project" -p:PublishReadyToRun=false
  fi
done
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
