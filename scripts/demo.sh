#!/usr/bin/env bash
# The newcomer's command: installs, builds, loads the demo program and starts Paretherm on
# http://localhost:3000 (PORT to change). Data goes to ./data (PARETHERM_DATA_DIR to change).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
npm run build
npm run seed
exec npm start
