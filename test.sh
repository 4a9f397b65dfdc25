#!/usr/bin/env bash
# Runs every test project of Tieflow and prints a closing line "N passed, N failed".
# Installs what the tests need when it is missing (npm packages of the OPC UA interop peer, victoria-metrics,
# docker-compose to validate the deployment file, the headless browser and the fonts of the report tests),
# builds once, runs the test projects, and exits non-zero on any failure.
set -uo pipefail
cd "$(dirname "$0")"
root=$(pwd)
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_SKIP_FIRST_TIME_EXPERIENCE=1

say() { printf 'test.sh: %s\n' "$*" >&2; }

# Debian packages some tests need; installed only when missing and when apt is usable. The first argument is a
# command on the PATH or the absolute path of a file the package installs.
ensure_deb() {
  local bin=$1 pkg=$2
  case "$bin" in
    /*) [ -e "$bin" ] && return 0 ;;
    *) command -v "$bin" >/dev/null 2>&1 && return 0 ;;
  esac
  if command -v apt-get >/dev/null 2>&1 && [ "$(id -u)" = 0 ]; then
    say "installing Debian package $pkg"
    (apt-get install -y -q "$pkg" >/dev/null 2>&1 || { apt-get update -q >/dev/null 2>&1 && apt-get install -y -q "$pkg" >/dev/null 2>&1; }) \
      || say "could not install $pkg; tests that need it will fail"
  fi
}
ensure_deb node nodejs
ensure_deb victoria-metrics victoria-metrics
ensure_deb docker-compose docker-compose
# The report's browser test (Playwright drives Debian's browser; never 'playwright install') and the plots' font.
ensure_deb /usr/lib/chromium/chromium-headless-shell chromium-headless-shell
ensure_deb /usr/share/fonts/truetype/dejavu/DejaVuSans.ttf fonts-dejavu-core

# npm packages of the interop peer (pinned in tests/interop/package-lock.json).
if [ -f tests/interop/package.json ] && [ ! -d tests/interop/node_modules ]; then
  say "installing interop peer packages (npm ci)"
  (cd tests/interop && npm ci --no-audit --no-fund --loglevel=error) || { say "npm ci failed"; exit 1; }
fi

results="$root/TestResults"
rm -rf "$results"
mkdir -p "$results"

say "building"
if ! dotnet build Monitor.sln -c Debug -nologo -v q; then
  say "build failed"
  echo "0 passed, 1 failed"
  exit 1
fi

status=0
for proj in tests/*.Tests/*.csproj; do
  name=$(basename "$proj" .csproj)
  say "running $name"
  dotnet test "$proj" --no-build -c Debug -nologo \
    --logger "trx;LogFileName=$name.trx" --results-directory "$results" || status=1
done

passed=0
failed=0
for trx in "$results"/*.trx; do
  [ -f "$trx" ] || continue
  counters=$(grep -o '<Counters [^>]*>' "$trx" | head -n 1)
  p=$(sed -n 's/.* passed="\([0-9]*\)".*/\1/p' <<<"$counters")
  f=$(sed -n 's/.* failed="\([0-9]*\)".*/\1/p' <<<"$counters")
  passed=$((passed + ${p:-0}))
  failed=$((failed + ${f:-0}))
done
[ "$failed" -gt 0 ] && status=1
[ "$passed" -eq 0 ] && status=1
echo "$passed passed, $failed failed"
exit $status
