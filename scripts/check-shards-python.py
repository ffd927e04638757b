#!/usr/bin/python3
"""Outside check run by CI: an independent MessagePack decoder (Debian's
python3-msgpack, with numpy.frombuffer) reads every shard of a shard
directory and must agree with sheaf's own reading, given as JSON Lines on
stdin (one sentence per line: id, fold, gold, flag, and per candidate score,
rank, matched, test, idx, val).

  node scripts/dump-shards.mjs DIR | /usr/bin/python3 scripts/check-shards-python.py DIR
"""
import json
import sys

import msgpack
import numpy as np


def read_shards(directory):
    # The README's "read a shard in Python" example, verbatim in spirit.
    manifest = json.load(open(f"{directory}/manifest.json"))
    for shard in manifest["shards"]:
        with open(f"{directory}/{shard['file']}", "rb") as f:
            for sent in msgpack.Unpacker(f, raw=False):
                for c in sent["cands"]:
                    c["idx"] = np.frombuffer(c["idx"], dtype="<u4")
                    c["val"] = np.frombuffer(c["val"], dtype="<f4")
                yield sent


def main():
    directory = sys.argv[1]
    ours = (json.loads(line) for line in sys.stdin)
    n = 0
    for py, js in zip(read_shards(directory), ours, strict=True):
        assert [py["id"], py["fold"], py["gold"], py["flag"]] == [js["id"], js["fold"], js["gold"], js["flag"]], (py["id"], js["id"])
        assert len(py["cands"]) == len(js["cands"])
        for a, b in zip(py["cands"], js["cands"]):
            assert [a["score"], a["rank"], a["matched"], a["test"]] == [b["score"], b["rank"], b["matched"], b["test"]]
            assert a["idx"].tolist() == b["idx"]
            assert np.array_equal(a["val"], np.array(b["val"], dtype="<f4"))
        n += 1
    print(f"python msgpack check: {n} sentences agree (msgpack {'.'.join(map(str, msgpack.version))}, numpy {np.__version__})")


if __name__ == "__main__":
    main()
