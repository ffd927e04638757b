#!/usr/bin/python3
"""Outside check run by CI: scikit-learn's svmlight reader (Debian's
python3-sklearn) reads `sheaf export --format svmlight` and its matrix,
targets and query ids must equal what `sheaf inspect --jsonl` shows for the
same shards (absolute vectors; target = candidate F1 as a fraction; qid =
1-based sentence number; index = bucket + 1).

  python3 scripts/check-export-sklearn.py EXPORT.svm INSPECT.jsonl
"""
import json
import sys

import numpy as np
import sklearn
from sklearn.datasets import load_svmlight_file


def main():
    svm, jsonl = sys.argv[1], sys.argv[2]
    sentences = [json.loads(line) for line in open(jsonl)]
    rows = [(q + 1, s, c) for q, s in enumerate(sentences) for c in s["cands"]]
    width = 1 + max((f[0] for _, _, c in rows for f in c["features"]), default=0)
    X, y, qid = load_svmlight_file(svm, n_features=width + 1, query_id=True, zero_based=False)
    assert X.shape[0] == len(rows), (X.shape, len(rows))
    X = X.tocsr()
    for r, (q, s, c) in enumerate(rows):
        assert qid[r] == q, (r, qid[r], q)
        gold, test = s["gold"], c["test"]
        f1 = 1.0 if gold + test == 0 else 2 * c["matched"] / (gold + test)
        assert abs(y[r] - f1) < 1e-12, (r, y[r], f1)
        start, end = X.indptr[r], X.indptr[r + 1]
        got = list(zip(X.indices[start:end].tolist(), X.data[start:end].tolist()))
        # sklearn's zero_based=False shifts indices down by one: column = bucket.
        want = [(i, v) for i, v in c["features"]]
        assert got == want, (r, got[:5], want[:5])
    print(f"sklearn check: {len(rows)} exported candidates of {len(sentences)} sentences agree (scikit-learn {sklearn.__version__}, numpy {np.__version__})")


if __name__ == "__main__":
    main()
