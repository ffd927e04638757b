/**
 * The trees a fold trains on and the sentences it parses, read from a plan
 * folder's held-out files (and `--parse` treebanks), streamed.
 */
import { createHash } from 'node:crypto';
import { DataError } from '../core/errors.js';
import { createVocabulary } from '../core/interner.js';
import { normaliseTree } from '../core/normalise.js';
import { yieldOf, type Tree } from '../core/tree.js';
import { readBytes } from '../io/open-input.js';
import { readTreebank } from '../io/read-treebank.js';

/** sha256 of a file's bytes as read (gunzipped if gzip), `sha256:<hex>`. */
export async function treebankDigest(file: string): Promise<string> {
  const h = createHash('sha256');
  for await (const c of readBytes(file)) h.update(c);
  return `sha256:${h.digest('hex')}`;
}

/** The normalised trees of several treebanks, in order (bad trees are an error: split wrote these files). */
export async function* normalisedTrees(files: readonly string[]): AsyncGenerator<{ id: string; tree: Tree }> {
  for (const file of files) {
    for await (const r of readTreebank(file, { vocab: createVocabulary() })) {
      const tree = normaliseTree(r.tree);
      if (!tree) throw new DataError('empty-tree', 'the tree holds only empty elements; there are no words to parse', { file, line: r.line, id: r.id });
      yield { id: r.id, tree };
    }
  }
}

/** The sentences (ids and words) of a treebank, as prepare will see them: words of the normalised trees. */
export async function* sentencesOf(file: string): AsyncGenerator<{ id: string; words: string[] }> {
  for await (const { id, tree } of normalisedTrees([file])) yield { id, words: yieldOf(tree) };
}
