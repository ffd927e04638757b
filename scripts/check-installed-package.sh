#!/usr/bin/env bash
# Installs sheaf as a package (npm pack, then npm install of the tarball into an
# empty folder) and runs a small job there: the README's claim that an
# installed sheaf runs as `npx sheaf …` and finds its shipped pipelines and
# demo corpus. Prints what it ran; exits non-zero on the first failure.
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
work=$(mktemp -d "${TMPDIR:-/tmp}/sheaf-installed-XXXXXX")
trap 'rm -rf "$work"' EXIT
tgz=$(cd "$root" && npm pack --silent --pack-destination "$work" | tail -n 1)
cd "$work"
npm init -y >/dev/null
npm install --no-audit --no-fund --prefer-offline "./$tgz" >/dev/null
corpus=node_modules/sheaf/demo-corpus
run() { echo "+ $*" >&2; "$@"; }
run npx sheaf --version
run npx sheaf split "$corpus/huts-dev.trees" --folds 2 -o plan --quiet
run npx sheaf jackknife --plan plan --nbest 5 --workers 1 -o nbest --quiet
run npx sheaf prepare --gold "$corpus/huts-dev.trees" --nbest nbest/fold-0.jsonl.gz nbest/fold-1.jsonl.gz --plan plan --pipeline demo -o shards --quiet --json > prepare.json
node -e 'const s = require("./prepare.json"); if (s.written !== 400 || s.rejected !== 0) { console.error("unexpected totals", s); process.exit(1); } console.log(`prepared ${s.written} lists, ${s.candidates} candidates`);'
run npx sheaf train shards -o model --epochs 2 --quiet
run npx sheaf eval shards --model model --samples 100 --json > eval.json
node -e 'const e = require("./eval.json"); console.log(`installed package: base ${e.base.f1.toFixed(2)}, re-ranked ${e.reranked.f1.toFixed(2)} (training data)`);'
echo "installed package: ok"
