#!/usr/bin/env node
// Prints every sentence of a shard directory as JSON Lines, as sheaf's own
// reader sees it (for scripts/check-shards-python.py).
import { readShardDir } from '../dist/io/read-shards.js';

for await (const s of readShardDir(process.argv[2])) {
  const cands = s.cands.map((c) => ({ score: c.score, rank: c.rank, matched: c.matched, test: c.test, idx: Array.from(c.idx), val: Array.from(c.val) }));
  process.stdout.write(JSON.stringify({ id: s.id, fold: s.fold, gold: s.gold, flag: s.flag, cands }) + '\n');
}
