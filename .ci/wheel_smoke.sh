#!/usr/bin/env bash
# Wheel smoke check (run by .ci/run, not by `make test`): build the wheel, install it into a fresh virtual
# environment in a temporary folder OUTSIDE the checkout, and use it there as a new user would:
#   netstretch --version; netstretch samples DIR; netstretch compare --manifest DIR/compounds.toml --json
#   (one JSON object); netstretch library import + trend on the QC history; netstretch batch DIR with 1 and 2 processes (identical files); netstretch serve on a free
#   localhost port, page fetched, log free of tracebacks/errors.
# Usage: bash .ci/wheel_smoke.sh [PYTHON]   (default python3; the wheel is built with that interpreter's pip)
set -euo pipefail
ROOT="$(cd "$(dirname "$0")/.." && pwd)"
PYTHON="${1:-python3}"
WORK="$(mktemp -d -t netstretch-wheel-XXXXXX)"
SERVER_PID=""
cleanup() {
    if [ -n "$SERVER_PID" ] && kill -0 "$SERVER_PID" 2>/dev/null; then
        kill "$SERVER_PID" 2>/dev/null || true
        wait "$SERVER_PID" 2>/dev/null || true
    fi
    rm -rf "$WORK"
}
trap cleanup EXIT

echo "[wheel] building in $WORK"
"$PYTHON" -m pip wheel --quiet --no-deps --wheel-dir "$WORK/dist" "$ROOT"
WHEEL="$(ls "$WORK"/dist/netstretch-*.whl)"
"$PYTHON" -m venv "$WORK/venv"
VPY="$WORK/venv/bin/python"
"$VPY" -m pip install --quiet "$WHEEL"

cd "$WORK"  # nothing of the checkout on the path from here on
VERSION="$("$WORK/venv/bin/netstretch" --version)"
echo "[wheel] $VERSION"
[[ "$VERSION" == netstretch\ * ]] || { echo "[wheel] unexpected --version output: $VERSION"; exit 1; }
"$VPY" -m network_models --version >/dev/null

"$WORK/venv/bin/netstretch" samples "$WORK/samples" >/dev/null
test -f "$WORK/samples/compounds.toml" || { echo "[wheel] samples wrote no compounds.toml"; exit 1; }

"$WORK/venv/bin/netstretch" compare --manifest "$WORK/samples/compounds.toml" --json > "$WORK/compare.json"
"$VPY" - "$WORK/compare.json" <<'EOF'
import json, sys
doc = json.loads(open(sys.argv[1], encoding="utf-8").read())
assert isinstance(doc, dict), f"compare --json printed a {type(doc).__name__}, not a JSON object"
print(f"[wheel] compare --json: an object with keys {sorted(doc)[:6]}")
EOF

# the results library from the wheel (its Alembic migrations are package data): import the QC history, trend it
"$WORK/venv/bin/netstretch" library import --manifest "$WORK/samples/qc_history/qc_history.toml" \
    --db "$WORK/library.sqlite" >/dev/null
"$WORK/venv/bin/netstretch" library trend --db "$WORK/library.sqlite" --compound-prefix QM-M7 --json > "$WORK/trend.json"
"$VPY" - "$WORK/trend.json" <<'EOF'
import json, sys
doc = json.loads(open(sys.argv[1], encoding="utf-8").read())
flagged = [p["compound"] for p in doc["points"] if p["out_of_control"]]
assert len(doc["points"]) == 16 and flagged == ["QM-M7-B13"], (len(doc["points"]), flagged)
print(f"[wheel] library: 16 batches imported, trend flags {flagged}")
EOF

# batch over the written samples, one process and two: the same result file, unreadable files listed
"$WORK/venv/bin/netstretch" batch "$WORK/samples" --model eight-chain -o "$WORK/one.csv" --no-progress
"$WORK/venv/bin/netstretch" batch "$WORK/samples" --model eight-chain -o "$WORK/two.csv" --jobs 2 --no-progress
cmp -s "$WORK/one.csv" "$WORK/two.csv" || { echo "[wheel] batch: 1 and 2 processes gave different results"; exit 1; }
"$VPY" - "$WORK/one.csv" <<'EOF'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], encoding="utf-8")))
files = {r["file"] for r in rows}
assert len(files) >= 10 and all(r["G0"] for r in rows), f"batch fitted {len(files)} sample files"
print(f"[wheel] batch: {len(rows)} curves from {len(files)} files, identical with --jobs 2")
EOF

"$VPY" - <<'EOF'
import netstretch_app, network_models.samples as s
assert "site-packages" in netstretch_app.__file__, netstretch_app.__file__
assert "site-packages" in str(s.sample_dir()), s.sample_dir()
from netstretch_app.data_state import DataState
st = DataState()
problems = st.load_samples()
assert st.files and not problems, f"the app's data state loaded {len(st.files)} sample files; problems: {problems}"
print(f"[wheel] app and samples come from the installed package ({len(st.files)} sample files load)")
EOF

PORT="$("$VPY" -c 'import socket; s = socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')"
"$WORK/venv/bin/netstretch" serve --port "$PORT" --address 127.0.0.1 > "$WORK/serve.log" 2>&1 &
SERVER_PID=$!
"$VPY" - "$PORT" <<'EOF'
import socket, sys, time, urllib.request
port = int(sys.argv[1])
deadline = time.monotonic() + 120
while True:
    try:
        socket.create_connection(("127.0.0.1", port), timeout=1).close()
        break
    except OSError:
        if time.monotonic() > deadline:
            sys.exit("[wheel] the server did not answer within 120 s")
        time.sleep(0.3)
with urllib.request.urlopen(f"http://127.0.0.1:{port}/", timeout=180) as r:
    page = r.read().decode("utf-8", "replace")
assert r.status == 200 and "netstretch" in page, "the page did not come back"
print(f"[wheel] page served ({len(page)} bytes)")
EOF
sleep 1
if grep -E "Traceback|ERROR|could not be loaded" "$WORK/serve.log"; then
    echo "[wheel] the server log is not clean:"; cat "$WORK/serve.log"; exit 1
fi
echo "[wheel] smoke check passed"
