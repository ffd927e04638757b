/**
 * The embedded base parser: a markovised PCFG estimated from a treebank,
 * CKY with unary closure, and lazy k-best extraction (Huang & Chiang 2005,
 * Algorithm 3). Pure: no node: imports.
 */
export { DEFAULT_PCFG_SETTINGS, checkPcfgSettings, settingsKey, parseSettingsKey, type PcfgSettings } from './settings.js';
export { PcfgTrainer } from './train-pcfg.js';
export { Grammar, type GrammarData } from './grammar.js';
export { encodeGrammar, decodeGrammar } from './encode.js';
export { KBestParser, type ParseResult, type ParseStats } from './kbest.js';
export { signatureOf, wordShape, SUFFIXES, GENERIC_CLASS } from './unknown-words.js';
