#!/usr/bin/env bash
# Every test: unit and integration (vitest), then the built app in Chromium.
# Installs Debian's chromium when it is missing (the machines run as root).
set -euo pipefail
cd "$(dirname "$0")/.."
export ASTRO_TELEMETRY_DISABLED=1

if [ -z "${CHROMIUM_PATH:-}" ] && [ ! -x /usr/bin/chromium ]; then
  echo "chromium is missing: installing Debian's package"
  if [ "$(id -u)" -ne 0 ]; then echo "run as root, or set CHROMIUM_PATH to a Chromium binary" >&2; exit 1; fi
  apt-get update -qq
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium >/dev/null
fi

npx astro check
npx vitest run
npx astro build
npx vitest run --config vitest.e2e.config.ts
