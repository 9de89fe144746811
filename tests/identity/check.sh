#!/usr/bin/env bash
# Byte-identity check for behaviour-preserving changes: build REF (default: the commit before
# the module restructure) in a temporary worktree, run tests/identity/run_cases.sh with its
# binary and with this tree's, and compare every output file byte for byte.
# Usage: bash tests/identity/check.sh [REF]   (needs cargo, python3 with numpy)
set -euo pipefail
root=$(git -C "$(dirname "$0")" rev-parse --show-toplevel)
ref=${1:-74db054}
work=$(mktemp -d)
trap 'git -C "$root" worktree remove --force "$work/ref" >/dev/null 2>&1 || true; rm -rf "$work"' EXIT
git -C "$root" worktree add --detach "$work/ref" "$ref" >/dev/null
(cd "$work/ref" && cargo build --release -q -p resample-cli)
(cd "$root" && cargo build --release -q -p resample-cli)
bash "$root/tests/identity/run_cases.sh" "$work/ref/target/release/rerate" "$work/before"
bash "$root/tests/identity/run_cases.sh" "$root/target/release/rerate" "$work/after"
n=$(cd "$work/before" && find . -type f | wc -l)
if diff -r "$work/before" "$work/after"; then
  echo "identical: $n files (ref $ref vs this tree)"
else
  echo "DIFFERENT outputs (ref $ref vs this tree)" >&2
  exit 1
fi
