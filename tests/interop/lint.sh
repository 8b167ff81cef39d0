#!/usr/bin/env bash
# Contract checks: buf lint (STANDARD + COMMENTS, see buf.yaml) and, when the main branch already has a contract,
# buf breaking against it, unless this change declares a new baseline (protos/pathservice/BASELINE differs).
set -euo pipefail
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
cd "$here"
[ -x node_modules/.bin/buf ] || npm ci --no-audit --no-fund
buf="$here/node_modules/.bin/buf"

cd "$root"
"$buf" lint
echo "buf lint: clean"

# The contract to stay compatible with: PROTO_BASE_REF when given, else the remote main, else the previous commit
# that changed the contract (in CI's fresh clone of main that is the last contract before this submission's head).
if [ -n "${PROTO_BASE_REF:-}" ]; then base="$PROTO_BASE_REF"
elif git rev-parse --verify --quiet origin/main >/dev/null && [ "$(git rev-parse origin/main)" != "$(git rev-parse HEAD)" ]; then base=origin/main
else base="$(git log --format=%H -n 1 --skip=1 -- protos/pathservice 2>/dev/null || true)"; base="${base:-HEAD}"
fi
# A deliberate new baseline: when this checkout's protos/pathservice/BASELINE differs from the base's (or the base has
# none), the change declares a new frozen contract, so breaking changes against the base are intended and not checked.
marker=protos/pathservice/BASELINE
head_marker="$(cat "$marker" 2>/dev/null || true)"
base_marker="$(git show "$base:$marker" 2>/dev/null || true)"
if [ -n "$head_marker" ] && [ "$head_marker" != "$base_marker" ] \
   && git rev-parse --verify --quiet "$base" >/dev/null && [ -n "$(git ls-tree -r --name-only "$base" -- protos/pathservice 2>/dev/null)" ]; then
  echo "buf breaking: skipped, this change declares a new contract baseline ($marker differs from $base's):"
  echo "  was: ${base_marker:-<no baseline marker>}" | head -n 1
  echo "  now: $head_marker" | head -n 1
  echo "  breaking changes against $base are deliberate; the next change is checked against this baseline"
elif git rev-parse --verify --quiet "$base" >/dev/null && [ -n "$(git ls-tree -r --name-only "$base" -- protos/pathservice 2>/dev/null)" ]; then
  # Compare against an exported copy of the base's contract (works in clones and worktrees alike).
  prev="$(mktemp -d)"
  trap 'rm -rf "$prev"' EXIT
  git archive "$base" -- protos $(git ls-tree --name-only "$base" -- buf.yaml) | tar -x -C "$prev"
  "$buf" breaking --against "$prev"
  echo "buf breaking: no breaking change against $base"
else
  echo "buf breaking: skipped, '$base' has no earlier contract under protos/pathservice"
fi
