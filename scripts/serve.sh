#!/usr/bin/env bash
# Build the page and serve www/ on 127.0.0.1 (the example data is one click away on the page).
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/build-web.sh
PORT="${PORT:-8765}"
echo "popdecode is at http://127.0.0.1:$PORT/  (offline single file: dist/popdecode.html)"
# With the headers that let the page's workers share one copy of the data (scripts/serve.py says which).
exec python3 scripts/serve.py "$PORT" www
