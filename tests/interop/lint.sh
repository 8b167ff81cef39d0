#!/usr/bin/env bash
# Contract checks: buf lint (STANDARD + COMMENTS, see buf.yaml) and, when the main branch already has a contract,
# buf breaking against it.
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
if git rev-parse --verify --quiet "$base" >/dev/null && [ -n "$(git ls-tree -r --name-only "$base" -- protos/pathservice 2>/dev/null)" ]; then
  # Compare against an exported copy of the base's contract (works in clones and worktrees alike).
  prev="$(mktemp -d)"
  trap 'rm -rf "$prev"' EXIT
  git archive "$base" -- protos $(git ls-tree --name-only "$base" -- buf.yaml) | tar -x -C "$prev"
  "$buf" breaking --against "$prev"
  echo "buf breaking: no breaking change against $base"
else
  echo "buf breaking: skipped, '$base' has no earlier contract under protos/pathservice"
fi
