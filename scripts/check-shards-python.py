#!/usr/bin/python3
"""Outside check run by CI: an independent MessagePack decoder (Debian's
python3-msgpack, with numpy and the standard library's gzip) reads every
shard of a shard directory through the README's own snippet (extracted from
README.md and run as written) and must agree with `sheaf inspect DIR --jsonl`,
given on stdin: same sentences in the same order, same fields, same absolute
feature vectors.

  node bin/sheaf.js inspect DIR --jsonl | /usr/bin/python3 scripts/check-shards-python.py DIR
  (or with the view in a file on stdin)
"""
import json
import re
import sys
from pathlib import Path

import msgpack
import numpy as np

MARKER = "<!-- python-shard-reader: checked in CI by scripts/check-shards-python.py -->"


def readme_snippet():
    text = (Path(__file__).resolve().parent.parent / "README.md").read_text()
    after = text.split(MARKER, 1)[1]
    code = re.search(r"```python\n(.*?)```", after, re.S).group(1)
    lines = [l for l in code.splitlines() if l.strip()]
    assert len(lines) <= 15, f"the README snippet has {len(lines)} lines; it promises at most 15"
    return code


def main():
    directory = sys.argv[1]
    scope = {}
    exec(readme_snippet(), scope)
    ours = (json.loads(line) for line in sys.stdin)
    n = 0
    for py, js in zip(scope["sentences"](directory), ours, strict=True):
        for key in ["id", "fold", "gold", "len", "flag"]:
            assert py[key] == js[key], (key, py[key], js[key])
        assert len(py["cands"]) == len(js["cands"]), py["id"]
        for a, b in zip(py["cands"], js["cands"]):
            assert [a["rank"], a["score"], a["matched"], a["test"]] == [b["rank"], b["score"], b["matched"], b["test"]], py["id"]
            assert [list(f) for f in a["features"]] == b["features"], (py["id"], a["rank"])
        n += 1
    print(f"python check: {n} sentences agree (README snippet; msgpack {'.'.join(map(str, msgpack.version))}, numpy {np.__version__})")


if __name__ == "__main__":
    main()
