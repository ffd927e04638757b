#!/usr/bin/env bash
# CI: runs the README's walkthrough exactly as written (the block after the
# marker line), in the repository, with its `work/` folder removed afterwards.
set -euo pipefail
cd "$(dirname "$0")/.."
block=$(awk '/<!-- walkthrough: run by CI/{f=1; next} f && /^```sh$/{g=1; next} g && /^```$/{exit} g' README.md)
if [ -z "$block" ]; then echo "walkthrough: no block found after the marker in README.md" >&2; exit 1; fi
rm -rf work
trap 'rm -rf work' EXIT
echo "$block" | grep -v '^#' | while IFS= read -r line; do
  [ -z "$line" ] && continue
  echo "\$ $line"
  bash -c "set -euo pipefail; $line" 2>&1 | tail -4
done
test -s work/best.trees && test -s work/train.svm && test -f work/model/model.json && test -s work/report.html
echo "walkthrough: every command ran"
