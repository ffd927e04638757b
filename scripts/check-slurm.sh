#!/usr/bin/env bash
# CI: sheaf's `--engine slurm` on a real (single-node) Slurm, against one machine.
#
# Starts Slurm with scripts/slurm-local.sh (and stops it on the way out), then
# 1. jackknifes the demo corpus (10 folds, 50-best, dev and test parsed too)
#    here and as a Slurm array job: lists, models, jackknife.json and the
#    plans' folds.json must be the same bytes;
# 2. prepares the training folds here and as 4 Slurm array tasks plus the
#    merge job after them: every file of the shard folder must be the same
#    bytes (the cluster folder slurm/ aside);
# 3. trains a model on each (dev shards picking the epoch): the same bytes.
# Prints `sheaf status` of each submission. Exit status 0 only if all hold.
set -euo pipefail
cd "$(dirname "$0")/.."
sheaf() { node bin/sheaf.js "$@"; }
say() { echo "check-slurm: $*" >&2; }
work=$(mktemp -d /tmp/sheaf-check-slurm.XXXXXX)
started=0
cleanup() {
  if [ "$started" = 1 ]; then bash scripts/slurm-local.sh stop || true; fi
  rm -rf "$work"
}
trap cleanup EXIT

bash scripts/slurm-local.sh start
started=1

# Waits until no job of the submission recorded in DIR/slurm/submitted.json is in the queue (at most 15 minutes).
wait_jobs() {
  local ids
  ids=$(node -e 'for (const j of JSON.parse(require("fs").readFileSync(process.argv[1], "utf8")).jobs) console.log(j.id)' "$1/slurm/submitted.json")
  for _ in $(seq 900); do
    local queued
    queued=$(squeue -h -r -o '%i' | while read -r q; do for id in $ids; do case "$q" in "$id"|"$id"_*) echo "$q" ;; esac; done; done)
    [ -z "$queued" ] && return 0
    sleep 1
  done
  say "jobs still queued after 15 minutes: $queued"
  return 1
}

same() { # A B [what]: every file under A and B the same bytes (slurm/ aside)
  if diff -rq --exclude=slurm "$1" "$2"; then say "${3:-$1}: the same bytes as one machine's"; else say "${3:-$1}: DIFFERS from one machine's"; return 1; fi
}

corpus=demo-corpus
t0=$(date +%s)
say "1. jackknife of the demo corpus, here and through Slurm"
sheaf split "$corpus/huts-train.trees" --folds 10 -o "$work/plan-here" --quiet
sheaf split "$corpus/huts-train.trees" --folds 10 -o "$work/plan-slurm" --quiet
sheaf jackknife --plan "$work/plan-here" --nbest 50 --parse "$corpus/huts-dev.trees" "$corpus/huts-test.trees" -o "$work/nbest-here" --quiet
sheaf jackknife --plan "$work/plan-slurm" --nbest 50 --parse "$corpus/huts-dev.trees" "$corpus/huts-test.trees" -o "$work/nbest-slurm" --engine slurm --slurm-opt=--time=00:20:00
wait_jobs "$work/nbest-slurm"
sheaf status "$work/nbest-slurm"
same "$work/nbest-slurm" "$work/nbest-here" "jackknife lists, models and jackknife.json"
same "$work/plan-slurm" "$work/plan-here" "the plan with its fold models"

say "2. prepare of the training folds, here and as 4 parts + merge through Slurm"
# The demo pipeline with shards of 700 sentences: each part (1,000 sentences) writes 2, the merge re-cuts 6.
node -e 'const p = JSON.parse(require("fs").readFileSync("pipelines/demo.json", "utf8"));
  for (const s of p.stages) {
    if (s.stage === "write-shards.v1") s.sentencesPerShard = 700;
    for (const t of s.templates ?? []) if (t.path) t.path = require("path").resolve("pipelines", t.path);
  }
  require("fs").writeFileSync(process.argv[1], JSON.stringify(p, null, 2));' "$work/pipeline.json"
folds=("$work"/nbest-slurm/fold-*.jsonl.gz)
sheaf prepare --gold "$corpus/huts-train.trees" --nbest "${folds[@]}" --plan "$work/plan-slurm" --pipeline "$work/pipeline.json" -o "$work/train-here" --quiet
sheaf prepare --gold "$corpus/huts-train.trees" --nbest "${folds[@]}" --plan "$work/plan-slurm" --pipeline "$work/pipeline.json" -o "$work/train-slurm" --engine slurm --tasks 4 --slurm-opt=--time=00:20:00
wait_jobs "$work/train-slurm"
sheaf status "$work/train-slurm"
[ -e "$work/train-slurm/manifest.json" ] || { say "no merged manifest.json: the parts or the merge failed (logs in $work/train-slurm/slurm/logs)"; cat "$work"/train-slurm/slurm/logs/* >&2 || true; exit 1; }
same "$work/train-slurm" "$work/train-here" "merged shards, count files, rejects, manifest"
# Three of the four parts: refused, naming the missing one.
if out=$(sheaf merge "$work"/train-slurm/slurm/parts/part-{0,1,3} -o "$work/three" --quiet 2>&1); then say "a merge without part 2 was not refused"; exit 1; fi
echo "$out" | grep -q 'missing part 2 of 4' || { say "the refusal does not name the missing part: $out"; exit 1; }
say "a merge without part 2 is refused: $out"

say "3. a model trained on each"
sheaf prepare --gold "$corpus/huts-dev.trees" --nbest "$work/nbest-slurm/huts-dev.jsonl.gz" --pipeline "$work/pipeline.json" -o "$work/dev" --quiet
sheaf train "$work/train-here" --dev "$work/dev" -o "$work/model-here" --quiet
sheaf train "$work/train-slurm" --dev "$work/dev" -o "$work/model-slurm" --quiet
same "$work/model-slurm" "$work/model-here" "the model"
say "all the same, in $(( $(date +%s) - t0 )) s"
