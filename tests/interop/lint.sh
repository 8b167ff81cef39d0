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

base="${PROTO_BASE_REF:-main}"
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
