#!/usr/bin/env bash
# Run before `npm test`: the integration suites need socat (pty pairs), Debian's Chromium (browser tests),
# python3 with numpy + scipy (reference values), prometheus_client (the OpenMetrics reference parser) in python3
# or in Debian's /usr/bin/python3 (the apt package python3-prometheus-client), and g++ + make so that `npm ci` can
# compile better-sqlite3 where its prebuilt binary cannot be fetched (about 70 s), and poppler-utils (pdftotext and
# pdfinfo read the report's PDF). Installs the Debian packages
# when missing and we are root; otherwise says exactly what to install.
set -euo pipefail
missing=()
command -v socat >/dev/null 2>&1 || missing+=(socat)
[ -x /usr/bin/chromium ] || missing+=(chromium)
python3 -c 'import numpy, scipy' >/dev/null 2>&1 || missing+=(python3-numpy python3-scipy)
has_prometheus() { "$1" -c 'import prometheus_client.openmetrics.parser' >/dev/null 2>&1; }
has_prometheus python3 || { [ -x /usr/bin/python3 ] && has_prometheus /usr/bin/python3; } || missing+=(python3-prometheus-client)
command -v g++ >/dev/null 2>&1 || missing+=(g++)
command -v make >/dev/null 2>&1 || missing+=(make)
{ command -v pdftotext && command -v pdfinfo; } >/dev/null 2>&1 || missing+=(poppler-utils)
[ ${#missing[@]} -eq 0 ] && exit 0
if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
  echo "floorline tests: installing Debian packages ${missing[*]}" >&2
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq "${missing[@]}" >/dev/null
else
  echo "floorline tests need: ${missing[*]}. Install them, e.g. sudo apt-get install ${missing[*]}" >&2
  exit 1
fi
