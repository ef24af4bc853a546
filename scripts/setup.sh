#!/usr/bin/env bash
# Installs what Paretherm needs on a fresh Debian machine: redis-server (the job queue's store),
# chromium when browser tests will run (--with-browser), and the npm packages from the lock file.
set -euo pipefail
cd "$(dirname "$0")/.."

want=()
command -v redis-server >/dev/null 2>&1 || want+=(redis-server)
if [ "${1:-}" = "--with-browser" ] && [ ! -x /usr/bin/chromium ]; then want+=(chromium); fi

if [ ${#want[@]} -gt 0 ]; then
	echo "Installing Debian packages: ${want[*]}"
	if [ "$(id -u)" = "0" ]; then
		apt-get update -qq
		DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${want[@]}" >/dev/null
	elif command -v sudo >/dev/null 2>&1; then
		sudo apt-get update -qq
		sudo DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${want[@]}" >/dev/null
	else
		echo "Paretherm needs these Debian packages: ${want[*]}. Install them with: apt-get install -y ${want[*]}" >&2
		exit 1
	fi
fi

# sqlite3 compiles from source here; node-gyp must use Node's local headers, not download them.
if [ -d /usr/include/node ]; then export npm_config_nodedir=/usr; fi
if [ ! -d node_modules ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
	npm ci --no-audit --no-fund
fi
