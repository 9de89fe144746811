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
# The reference gets a target folder of its own, even when CARGO_TARGET_DIR is set (else
# both builds would share one binary); this tree's build goes where cargo puts it.
(cd "$work/ref" && CARGO_TARGET_DIR="$work/ref/target" cargo build --release -q -p resample-cli)
(cd "$root" && cargo build --release -q -p resample-cli)
target="${CARGO_TARGET_DIR:-target}"
case "$target" in /*) ;; *) target="$root/$target" ;; esac
bash "$root/tests/identity/run_cases.sh" "$work/ref/target/release/rerate" "$work/before"
bash "$root/tests/identity/run_cases.sh" "$target/release/rerate" "$work/after"
n=$(cd "$work/before" && find . -type f | wc -l)
if diff -r "$work/before" "$work/after"; then
  echo "identical: $n files (ref $ref vs this tree)"
else
  echo "DIFFERENT outputs (ref $ref vs this tree)" >&2
  exit 1
fi
