#!/usr/bin/env bash
# Installs what a fresh machine lacks: Debian packages and the npm dependencies.
#   services/bootstrap.sh          PostgreSQL (for npm run demo / dev)
#   services/bootstrap.sh --test   also Chromium, poppler-utils, the Python reference libraries and sqlmap used by the tests
#   services/bootstrap.sh --bench  also python3 with numpy and scipy, for the lattice check's peer in `npm run bench`
set -euo pipefail
cd "$(dirname "$0")/.."

need=()
[ -x /usr/lib/postgresql/15/bin/pg_ctl ] || need+=(postgresql)
if [ "${1:-}" = "--test" ]; then
  [ -x /usr/bin/chromium ] || need+=(chromium)
  # pdftotext reads the invoices back in tests/integration/invoices.test.ts.
  [ -x /usr/bin/pdftotext ] || need+=(poppler-utils)
  # The outside SQL-injection scanner of tests/system/sqlmap.test.ts.
  command -v sqlmap >/dev/null || need+=(sqlmap)
  /usr/bin/python3 -c 'import xraylib, gemmi, pymatgen' 2>/dev/null || need+=(python3-xraylib python3-gemmi python3-pymatgen)
fi
if [ "${1:-}" = "--bench" ]; then
  # bench/peer/lattice_peer.py, the numpy/scipy comparison of bench/run.ts (the bench skips it, saying so, without them).
  python3 -c 'import numpy, scipy' 2>/dev/null || need+=(python3-numpy python3-scipy)
fi
if [ ${#need[@]} -gt 0 ]; then
  if [ "$(id -u)" != 0 ]; then
    echo "These Debian packages are missing: ${need[*]}. Install them (as root: apt-get install ${need[*]}) and run again." >&2
    exit 1
  fi
  echo "installing Debian packages: ${need[*]}"
  apt-get update -q >/dev/null
  DEBIAN_FRONTEND=noninteractive apt-get install -y -q "${need[@]}" >/dev/null
fi

# npm ci when node_modules is missing or older than the lock file.
if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  echo "installing npm dependencies (npm ci)"
  npm ci --no-audit --no-fund >/dev/null
fi
