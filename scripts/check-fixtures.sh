#!/bin/sh
# Regenerates the engine's QuTiP fixtures (test/reference/lines.py) into a temporary directory and compares
# every number with the committed test/fixtures/engine/*.json. Fails (exit 1) naming file, key and both
# values when a number differs by more than 1e-12 (relative to max(1, |value|), so that rates of order
# 1e9 /s compare by their significant digits), when a file or key is missing on either side, or when the
# generator fails. Entries under a "diagnostics" key (rounding-level residues of the generator's own
# self-checks, such as the expansion-vs-expm difference) are not reference values and are not compared. Needs /usr/bin/python3 with qutip, numpy and scipy (Debian python3-qutip).
set -eu
cd "$(dirname "$0")/.."
PY=/usr/bin/python3
COMMITTED=test/fixtures/engine
TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT INT TERM

if ! "$PY" -c 'import qutip, numpy, scipy' 2>/dev/null; then
  echo "check-fixtures: $PY cannot import qutip, numpy and scipy (install python3-qutip)" >&2
  exit 1
fi

start=$(date +%s)
"$PY" -W ignore test/reference/lines.py "$TMP" >/dev/null
echo "check-fixtures: regenerated in $(( $(date +%s) - start )) s"

"$PY" - "$COMMITTED" "$TMP" <<'EOF'
import json, os, sys

committed, fresh = sys.argv[1], sys.argv[2]
TOL = 1e-12
bad = []

def walk(a, b, where, name):
    if isinstance(a, dict) and isinstance(b, dict):
        for k in sorted(set(a) | set(b)):
            if k == "diagnostics":
                continue
            if k not in a or k not in b:
                bad.append(f"{name}: {where}.{k}: present only in the {'regenerated' if k in b else 'committed'} file")
            else:
                walk(a[k], b[k], f"{where}.{k}", name)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            bad.append(f"{name}: {where}: committed has {len(a)} entries, regenerated {len(b)}")
        for i, (x, y) in enumerate(zip(a, b)):
            walk(x, y, f"{where}[{i}]", name)
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool) and not isinstance(b, bool):
        if abs(a - b) > TOL * max(1.0, abs(a), abs(b)):
            bad.append(f"{name}: {where}: committed {a!r}, regenerated {b!r} (differ by {abs(a - b):.3e})")
    elif a != b and not (isinstance(a, str) and isinstance(b, str) and where.endswith(("toleranceReason", "description", "libraries"))):
        bad.append(f"{name}: {where}: committed {a!r}, regenerated {b!r}")

names = sorted(set(os.listdir(committed)) | set(os.listdir(fresh)))
names = [n for n in names if n.endswith(".json")]
for n in names:
    pc, pf = os.path.join(committed, n), os.path.join(fresh, n)
    if not os.path.exists(pc):
        bad.append(f"{n}: regenerated but not committed")
        continue
    if not os.path.exists(pf):
        bad.append(f"{n}: committed but no longer generated")
        continue
    with open(pc) as f1, open(pf) as f2:
        walk(json.load(f1), json.load(f2), "$", n)
if bad:
    print("check-fixtures: the regenerated fixtures differ from the committed ones:", file=sys.stderr)
    for line in bad:
        print("  " + line, file=sys.stderr)
    sys.exit(1)
print(f"check-fixtures: {len(names)} fixture files agree with the committed ones within {TOL:g}")
EOF
