/**
 * The head-percolation table of Collins (1999), PhD thesis "Head-Driven
 * Statistical Models for Natural Language Parsing", University of
 * Pennsylvania, appendix A (table A.1 and the special NP rules).
 *
 * Each entry: the parent label, the direction the children are scanned in
 * (`left`: from the first child rightwards; `right`: from the last child
 * leftwards), and the priority list. The search is by category first: for
 * each label in the list, scan all children in the given direction; the first
 * child with that label is the head. If no label matches, the head is the
 * first child scanned (leftmost for `left`, rightmost for `right`).
 *
 * Provenance of the values: written down from memory of the thesis; the
 * priority lists were afterwards compared with a public reproduction of the
 * same table and agree entry for entry. The directions are from memory
 * (marked on each line). Entries marked "sheaf" are ours, not the thesis's.
 */

export type Direction = 'left' | 'right';

export interface HeadRule {
  direction: Direction;
  priority: readonly string[];
}

export const HEAD_TABLE: Readonly<Record<string, HeadRule>> = {
  // Collins 1999, table A.1 (lists checked; direction from memory).
  ADJP: { direction: 'left', priority: ['NNS', 'QP', 'NN', '$', 'ADVP', 'JJ', 'VBN', 'VBG', 'ADJP', 'JJR', 'NP', 'JJS', 'DT', 'FW', 'RBR', 'RBS', 'SBAR', 'RB'] },
  ADVP: { direction: 'right', priority: ['RB', 'RBR', 'RBS', 'FW', 'ADVP', 'TO', 'CD', 'JJR', 'JJ', 'IN', 'NP', 'JJS', 'NN'] },
  CONJP: { direction: 'right', priority: ['CC', 'RB', 'IN'] },
  FRAG: { direction: 'right', priority: [] },
  INTJ: { direction: 'left', priority: [] },
  LST: { direction: 'right', priority: ['LS', ':'] },
  NAC: { direction: 'left', priority: ['NN', 'NNS', 'NNP', 'NNPS', 'NP', 'NAC', 'EX', '$', 'CD', 'QP', 'PRP', 'VBG', 'JJ', 'JJS', 'JJR', 'ADJP', 'FW'] },
  PP: { direction: 'right', priority: ['IN', 'TO', 'VBG', 'VBN', 'RP', 'FW'] },
  PRN: { direction: 'left', priority: [] },
  PRT: { direction: 'right', priority: ['RP'] },
  QP: { direction: 'left', priority: ['$', 'IN', 'NNS', 'NN', 'JJ', 'RB', 'DT', 'CD', 'NCD', 'QP', 'JJR', 'JJS'] },
  RRC: { direction: 'right', priority: ['VP', 'NP', 'ADVP', 'ADJP', 'PP'] },
  S: { direction: 'left', priority: ['TO', 'IN', 'VP', 'S', 'SBAR', 'ADJP', 'UCP', 'NP'] },
  SBAR: { direction: 'left', priority: ['WHNP', 'WHPP', 'WHADVP', 'WHADJP', 'IN', 'DT', 'S', 'SQ', 'SINV', 'SBAR', 'FRAG'] },
  SBARQ: { direction: 'left', priority: ['SQ', 'S', 'SINV', 'SBARQ', 'FRAG'] },
  SINV: { direction: 'left', priority: ['VBZ', 'VBD', 'VBP', 'VB', 'MD', 'VP', 'S', 'SINV', 'ADJP', 'NP'] },
  SQ: { direction: 'left', priority: ['VBZ', 'VBD', 'VBP', 'VB', 'MD', 'VP', 'SQ'] },
  UCP: { direction: 'right', priority: [] },
  VP: { direction: 'left', priority: ['TO', 'VBD', 'VBN', 'MD', 'VBZ', 'VB', 'VBG', 'VBP', 'VP', 'ADJP', 'NN', 'NNS', 'NP'] },
  WHADJP: { direction: 'left', priority: ['CC', 'WRB', 'JJ', 'ADJP'] },
  WHADVP: { direction: 'right', priority: ['CC', 'WRB'] },
  WHNP: { direction: 'left', priority: ['WDT', 'WP', 'WP$', 'WHADJP', 'WHPP', 'WHNP'] },
  WHPP: { direction: 'right', priority: ['IN', 'TO', 'FW'] },
  // sheaf: labels the table does not list. X is scanned like FRAG; a root
  // label (TOP, ROOT, or the unlabeled wrapper) takes its first child.
  X: { direction: 'right', priority: [] },
  TOP: { direction: 'left', priority: [] },
  ROOT: { direction: 'left', priority: [] },
  '': { direction: 'left', priority: [] },
};

/**
 * Collins 1999, appendix A, the NP rules (applied in order; lists checked,
 * order of steps from memory). NX is handled by the same rules (sheaf).
 * 1. if the last child is POS, it is the head;
 * 2. else scan right to left for the first of NN NNP NNPS NNS NX POS JJR;
 * 3. else scan left to right for NP;
 * 4. else scan right to left for the first of $ ADJP PRN;
 * 5. else scan right to left for CD;
 * 6. else scan right to left for the first of JJ JJS RB QP;
 * 7. else the last child.
 */
export const NP_STEPS: readonly { direction: Direction; labels: readonly string[] }[] = [
  { direction: 'right', labels: ['NN', 'NNP', 'NNPS', 'NNS', 'NX', 'POS', 'JJR'] },
  { direction: 'left', labels: ['NP'] },
  { direction: 'right', labels: ['$', 'ADJP', 'PRN'] },
  { direction: 'right', labels: ['CD'] },
  { direction: 'right', labels: ['JJ', 'JJS', 'RB', 'QP'] },
];

export const NP_LIKE: ReadonlySet<string> = new Set(['NP', 'NX', 'NML']);

/**
 * Coordination (Collins 1999, ch. 7 and appendix A, as restated by Bikel
 * 2004, "Intricacies of Collins' Parsing Model", section 5): once the head
 * child is found, if the child just before it is a coordinator and there is a
 * child before that, the head moves two to the left (`NP → NP CC NP` is headed
 * by the first conjunct). Labels counted as coordinators: from memory.
 */
export const COORDINATORS: ReadonlySet<string> = new Set(['CC', 'CONJP']);

/**
 * Labels of unlisted constituents fall back to their first child (sheaf).
 */
export const DEFAULT_RULE: HeadRule = { direction: 'left', priority: [] };
