#!/usr/bin/env bash
# Visual check of the HTML report in a real browser (not run by CI).
#
#   bash cmd/coilkick/plot/browsercheck.sh [SCENARIO.yaml] [OUT.png]
#
# Installs Debian's chromium when it is missing (needs root and the Debian
# archive), builds the report for a demo scenario and renders it headless
# to a PNG, then look at the PNG. Defaults: the process-air valve demo
# (it has a caution note), /tmp/report.png.
set -euo pipefail

root=$(cd "$(dirname "$0")/../../.." && pwd)
scenario=${1:-scenarios/process-air-valve.yaml}
out=${2:-/tmp/report.png}

browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
	apt-get update
	apt-get install -y chromium
	browser=$(command -v chromium)
fi

work=$(mktemp -d)
profile=$(mktemp -d)
trap 'rm -rf "$work" "$profile"' EXIT

cd "$root"
go build -o "$work/coilkick" ./cmd/coilkick
status=0
"$work/coilkick" report "$scenario" -o "$work/report.html" || status=$?
if [ "$status" -ne 0 ] && [ "$status" -ne 2 ]; then
	echo "browsercheck: report failed (exit $status)" >&2
	exit "$status"
fi

"$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
	--disable-background-networking --disable-component-update --disable-sync \
	--user-data-dir="$profile" --hide-scrollbars \
	--screenshot="$out" --window-size=1200,3000 "file://$work/report.html"
echo "browsercheck: $scenario (report exit $status) rendered to $out"
