/**
 * The report's charts as Vega-Lite specs: plain objects filled with the
 * figures of report-data.ts, nothing drawn by hand. `renderSvg` compiles a
 * spec with vega-lite and renders it with Vega's headless view (no browser,
 * no canvas: text widths are estimated).
 *
 * Each factory returns a `Chart`: an id (the figure's anchor and the browser
 * check's handle), a title and the spec. Only inline data values are used,
 * so rendering never loads anything.
 */
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { LENGTH_BUCKETS } from '../eval/run-eval.js';
import { bucketName, THRESHOLDS, type ModelFigures, type ShardDirFigures } from './report-data.js';

export interface Chart {
  id: string;
  title: string;
  spec: TopLevelSpec;
}

/** One colour per system, the same in every chart. */
export const SYSTEM_COLORS = { base: '#5a7ea8', oracle: '#3d9a6a', 're-ranked': '#d47a26' } as const;
const SYSTEMS = Object.keys(SYSTEM_COLORS);
const systemScale = (systems: string[]) => ({ domain: systems, range: systems.map((s) => SYSTEM_COLORS[s as keyof typeof SYSTEM_COLORS]) });

/** Shared look: our own, quiet. */
const CONFIG = {
  font: 'Helvetica, Arial, sans-serif',
  background: '#ffffff',
  view: { stroke: '#d9d9d9' },
  axis: { labelColor: '#333333', titleColor: '#333333', gridColor: '#ececec', titleFontWeight: 'normal', titleFontSize: 12, labelFontSize: 11 },
  legend: { labelFontSize: 11, titleFontSize: 11, titleFontWeight: 'normal' },
  header: { labelFontSize: 12, titleFontSize: 12 },
  range: { category: ['#4c6e91', '#c2553d', '#7a9a3a', '#8a5fa6', '#c9a227', '#3e8e8e', '#9a6b4b', '#5d5d5d'] },
} as const;

const COUNT = ',d';
const PCT = '.2f';

/**
 * The specs are written as plain data; vega-lite checks them when it
 * compiles (every chart is compiled by the tests), so the static type is only
 * asserted here.
 */
function top(spec: Record<string, unknown>): TopLevelSpec {
  return { $schema: 'https://vega.github.io/schema/vega-lite/v6.json', config: CONFIG, ...spec } as unknown as TopLevelSpec;
}

const dirScale = (dirs: ShardDirFigures[]) => ({ domain: dirs.map((d) => d.label) });
const dirColor = (dirs: ShardDirFigures[]) => ({ field: 'shards', type: 'nominal', title: 'shards', scale: dirScale(dirs), legend: dirs.length > 1 ? {} : null });
/** The width of each column when several directories stand side by side (the page is about 900 px wide). */
const facetWidth = (dirs: ShardDirFigures[], single: number) => (dirs.length > 1 ? Math.max(150, Math.floor(720 / dirs.length) - 50) : single);
/** Several directories side by side: one column each. */
const columns = (dirs: ShardDirFigures[]) => (dirs.length > 1 ? { column: { field: 'shards', type: 'nominal', title: null, sort: dirs.map((d) => d.label) } } : {});

/** Round tick values from 1 to `n`: 1 and multiples of a step (5, 10, 25, 50 …). */
function depthTicks(n: number): number[] {
  const step = [1, 2, 5, 10, 25, 50, 100, 250, 500, 1000, 2500, 5000].find((s) => n / s <= 12) ?? Math.ceil(n / 10);
  const ticks = [1];
  for (let t = step; t <= n; t += step) if (t > 1) ticks.push(t);
  return ticks;
}

/** 1, 10, 100 … up to the first power of ten at or above `n`. */
function powersOfTen(n: number): number[] {
  const out = [1];
  while (out[out.length - 1] < n) out.push(out[out.length - 1] * 10);
  return out;
}

/** Oracle F1 against list depth, base 1-best marked at depth 1, re-ranked F1 as a dashed level. */
export function depthChart(dirs: ShardDirFigures[]): Chart | null {
  const curve = dirs.flatMap((d) => d.oracleAtDepth.map((p) => ({ shards: d.label, depth: p.depth, f1: p.f1 })));
  if (curve.length === 0) return null;
  const base = dirs.filter((d) => d.oracleAtDepth.length).map((d) => ({ shards: d.label, depth: 1, f1: d.oracleAtDepth[0].f1, note: 'base 1-best' }));
  // One label, beside the lowest diamond (labels of several directories would overlap).
  const baseLabel = base.reduce<typeof base>((low, b) => (low.length === 0 || b.f1 < low[0].f1 ? [b] : low), []);
  const reranked = dirs.filter((d) => d.reranked).map((d) => ({ shards: d.label, f1: d.reranked!.f1, note: `re-ranked ${d.reranked!.f1.toFixed(2)}` }));
  const longest = Math.max(1, ...dirs.map((d) => d.oracleAtDepth.length));
  const x = { field: 'depth', type: 'quantitative', title: 'list depth: candidates considered (best base ranks first)', scale: { domain: [1, Math.max(2, longest)], nice: false }, axis: { values: depthTicks(Math.max(2, longest)), format: ',d' } };
  const y = { field: 'f1', type: 'quantitative', title: 'F1', scale: { zero: false }, axis: { format: '.1f' } };
  const layer: Record<string, unknown>[] = [
    { data: { values: curve }, mark: { type: 'line', point: longest <= 60 ? { size: 16 } : false, strokeWidth: 2 }, encoding: { x, y, color: dirColor(dirs) } },
    { data: { values: base }, mark: { type: 'point', shape: 'diamond', size: 150, filled: true, color: '#222222' }, encoding: { x, y } },
    { data: { values: baseLabel }, mark: { type: 'text', align: 'left', dx: 9, dy: 10, fontSize: 11 }, encoding: { x, y, text: { field: 'note' } } },
  ];
  if (reranked.length) {
    layer.push(
      { data: { values: reranked }, mark: { type: 'rule', strokeDash: [6, 4], strokeWidth: 1.5 }, encoding: { y, color: dirColor(dirs) } },
      { data: { values: reranked }, mark: { type: 'text', align: 'right', dy: -6, fontSize: 11 }, encoding: { x: { value: 'width' }, y, text: { field: 'note' } } },
    );
  }
  return { id: 'oracle-depth', title: 'Oracle F1 by list depth', spec: top({ width: 620, height: 300, layer }) };
}

/** F1 by sentence-length bucket: base, oracle and (with a model) re-ranked. */
export function lengthChart(dirs: ShardDirFigures[]): Chart | null {
  const values = dirs.flatMap((d) =>
    d.byLength.flatMap((r) => {
      const rows: [string, number][] = [['base', r.base.f1], ['oracle', r.oracle.f1]];
      if (r.reranked) rows.push(['re-ranked', r.reranked.f1]);
      return rows.map(([system, f1]) => ({ shards: d.label, words: r.words, system, f1, sentences: r.sentences }));
    }),
  );
  if (values.length === 0) return null;
  const systems = SYSTEMS.filter((s) => values.some((v) => v.system === s));
  const order = LENGTH_BUCKETS.map(bucketName).filter((b) => values.some((v) => v.words === b));
  const spec = {
    data: { values },
    width: facetWidth(dirs, 560),
    height: 260,
    mark: { type: 'line', point: { size: 60, filled: true }, strokeWidth: 2 },
    encoding: {
      x: { field: 'words', type: 'ordinal', title: 'sentence length in words', sort: order, axis: { labelAngle: 0 } },
      y: { field: 'f1', type: 'quantitative', title: 'F1', scale: { zero: false }, axis: { format: '.1f' } },
      color: { field: 'system', type: 'nominal', title: null, scale: systemScale(systems) },
      ...columns(dirs),
    },
  };
  return { id: 'length', title: 'F1 by sentence length', spec: top(spec) };
}

/** Dev F1 after each epoch, the kept epoch marked. */
export function learningChart(model: ModelFigures): Chart | null {
  const values = model.epochs.filter((e) => e.devF1 !== null).map((e) => ({ epoch: e.epoch, f1: e.devF1 }));
  if (values.length === 0) return null;
  const kept = values.filter((v) => v.epoch === model.bestEpoch).map((v) => ({ ...v, note: `kept: epoch ${v.epoch}` }));
  const x = { field: 'epoch', type: 'quantitative', title: model.method === 'perceptron' ? 'epoch' : 'L-BFGS iteration', axis: { tickMinStep: 1, format: 'd' }, scale: { domain: [1, Math.max(2, ...values.map((v) => v.epoch))], nice: false } };
  const y = { field: 'f1', type: 'quantitative', title: 'dev F1 (re-ranked)', scale: { zero: false }, axis: { format: '.2f' } };
  const layer = [
    { data: { values: kept }, mark: { type: 'rule', color: '#999999', strokeDash: [3, 3] }, encoding: { x } },
    { data: { values }, mark: { type: 'line', point: { size: 40, filled: true, color: SYSTEM_COLORS['re-ranked'] }, color: SYSTEM_COLORS['re-ranked'], strokeWidth: 2 }, encoding: { x, y } },
    { data: { values: kept }, mark: { type: 'point', size: 180, color: '#222222', strokeWidth: 2 }, encoding: { x, y } },
    { data: { values: kept }, mark: { type: 'text', align: 'left', dx: 6, y: -8, fontSize: 11 }, encoding: { x, text: { field: 'note' } } },
  ];
  return { id: 'learning', title: 'Learning curve', spec: top({ width: 560, height: 260, layer }) };
}

/** Sentences by the size of their candidate list (share of each directory's sentences). */
export function listSizeChart(dirs: ShardDirFigures[]): Chart | null {
  const values = dirs.flatMap((d) => d.listSizes.map((s) => ({ shards: d.label, candidates: s.candidates, sentences: s.sentences, share: d.sentences ? (100 * s.sentences) / d.sentences : 0 })));
  if (values.length === 0) return null;
  const distinct = new Set(values.map((v) => v.candidates)).size;
  const x = distinct <= 60
    ? { field: 'candidates', type: 'ordinal', title: 'candidates in the list', axis: { labelAngle: 0 } }
    : { field: 'candidates', type: 'quantitative', title: 'candidates in the list', axis: { format: COUNT } };
  const spec = {
    data: { values },
    width: distinct <= 60 ? { step: Math.max(12, 36 - 4 * dirs.length) * Math.max(1, dirs.length) } : 600,
    height: 220,
    mark: { type: 'bar' },
    encoding: {
      x,
      ...(dirs.length > 1 && distinct <= 60 ? { xOffset: { field: 'shards', sort: dirs.map((d) => d.label) } } : {}),
      y: { field: 'share', type: 'quantitative', title: '% of sentences', axis: { format: '.0f' } },
      color: dirColor(dirs),
    },
  };
  return { id: 'list-sizes', title: 'Candidates per sentence', spec: top(spec) };
}

/** Position ranges for long lists: 1 … 10 one by one, then wider ranges. */
const RANGES: [number, number][] = [[11, 20], [21, 50], [51, 100], [101, 200], [201, 500], [501, 1000], [1001, Infinity]];
function positionLabel(p: number, longest: number): string {
  if (longest <= 60 || p <= 10) return String(p);
  const r = RANGES.find(([lo, hi]) => p >= lo && p <= hi)!;
  return r[1] === Infinity ? `${r[0]}+` : `${r[0]}–${r[1]}`;
}

/** Where the oracle's (and the model's) choice sits in the base ranking. */
export function positionChart(dirs: ShardDirFigures[]): Chart | null {
  const longest = Math.max(1, ...dirs.map((d) => d.oracleAtDepth.length));
  const rows = new Map<string, { shards: string; position: string; order: number; choice: string; sentences: number; share: number }>();
  for (const d of dirs) {
    const add = (choice: string, ranks: number[]) =>
      ranks.forEach((n, rank) => {
        if (n === 0) return;
        const position = positionLabel(rank + 1, longest);
        const key = `${d.label}\u0000${choice}\u0000${position}`;
        const row = rows.get(key) ?? { shards: d.label, position, order: rank, choice, sentences: 0, share: 0 };
        row.sentences += n;
        row.share = d.sentences ? (100 * row.sentences) / d.sentences : 0;
        rows.set(key, row);
      });
    add('oracle', d.oracleRanks);
    if (d.rerankedRanks) add('re-ranked', d.rerankedRanks);
  }
  const values = [...rows.values()];
  if (values.length === 0) return null;
  // Every position up to the last one chosen anywhere, drawn or not, so gaps show as gaps.
  const last = Math.max(...dirs.flatMap((d) => [d.oracleRanks.length, d.rerankedRanks?.length ?? 0]));
  const order = [...new Set(Array.from({ length: last }, (_, k) => positionLabel(k + 1, longest)))];
  const choices = SYSTEMS.filter((s) => values.some((v) => v.choice === s));
  const spec = {
    data: { values },
    width: dirs.length > 1 ? facetWidth(dirs, 640) : Math.min(640, Math.max(240, order.length * 7 * choices.length)),
    height: 240,
    mark: { type: 'bar' },
    encoding: {
      x: { field: 'position', type: 'ordinal', title: 'position in the base ranking (1 = base 1-best)', sort: order, scale: { domain: order }, axis: { labelAngle: 0, labelOverlap: 'parity' } },
      xOffset: { field: 'choice', sort: choices },
      y: { field: 'share', type: 'quantitative', title: '% of sentences', axis: { format: '.0f' } },
      color: { field: 'choice', type: 'nominal', title: null, scale: systemScale(choices) },
      ...columns(dirs),
    },
  };
  return { id: 'positions', title: 'Where the chosen candidate sits in the base ranking', spec: top(spec) };
}

/** Buckets that vary in at least T sentences (count files), with the model's cut-off marked. */
export function occupancyChart(dirs: ShardDirFigures[], cutoff: number | null): Chart | null {
  const values = dirs.flatMap((d) => d.hashing.varyingAtLeast.filter((v) => v.buckets > 0).map((v) => ({ shards: d.label, threshold: v.threshold, buckets: v.buckets, share: (100 * v.buckets) / 2 ** d.bits })));
  if (values.length === 0) return null;
  const maxT = Math.max(...values.map((v) => v.threshold), cutoff ?? 1, 2);
  const maxB = Math.max(...values.map((v) => v.buckets));
  const x = { field: 'threshold', type: 'quantitative', title: 'varies in at least T sentences', scale: { type: 'log', domain: [1, maxT], nice: false }, axis: { format: COUNT, values: THRESHOLDS.filter((t) => t <= maxT) } };
  const y = { field: 'buckets', type: 'quantitative', title: 'buckets', scale: { type: 'log' }, axis: { format: COUNT, values: powersOfTen(maxB) } };
  const layer: Record<string, unknown>[] = [
    { data: { values }, mark: { type: 'line', point: { size: 40, filled: true }, strokeWidth: 2 }, encoding: { x, y, color: dirColor(dirs) } },
  ];
  if (cutoff !== null) {
    const c = [{ threshold: cutoff, note: `model cut-off ${cutoff}` }];
    layer.push(
      { data: { values: c }, mark: { type: 'rule', color: '#999999', strokeDash: [4, 3] }, encoding: { x } },
      { data: { values: c }, mark: { type: 'text', align: 'left', dx: 4, fontSize: 11, color: '#555555' }, encoding: { x, y: { value: 10 }, text: { field: 'note' } } },
    );
  }
  return { id: 'occupancy', title: 'Hash-space occupancy', spec: top({ width: 520, height: 240, layer }) };
}

/** Measured collision rate against the expected N/(2m), where prepare kept names. */
export function collisionChart(dirs: ShardDirFigures[]): Chart | null {
  const values = dirs.flatMap((d) => {
    const n = d.hashing.names;
    if (!n) return [];
    return [
      { shards: d.label, kind: 'measured', rate: 100 * n.collisionRate },
      { shards: d.label, kind: 'expected N/(2m)', rate: 100 * n.expectedRate },
    ];
  });
  if (values.length === 0) return null;
  const spec = {
    data: { values },
    width: Math.max(200, 110 * values.length / 2),
    height: 220,
    mark: { type: 'bar' },
    encoding: {
      x: { field: 'shards', type: 'nominal', title: null, sort: dirs.map((d) => d.label), axis: { labelAngle: 0 } },
      xOffset: { field: 'kind', sort: ['measured', 'expected N/(2m)'] },
      y: { field: 'rate', type: 'quantitative', title: 'collision rate (%)', axis: { format: PCT } },
      color: { field: 'kind', type: 'nominal', title: null, scale: { domain: ['measured', 'expected N/(2m)'], range: ['#4c6e91', '#b7c7d9'] } },
    },
  };
  return { id: 'collisions', title: 'Hash collisions', spec: top(spec) };
}

/** Each template's share of the non-zero features (buckets fired per sentence, summed). */
export function templateChart(dirs: ShardDirFigures[]): Chart | null {
  const values = dirs.flatMap((d) => {
    const total = d.templates.reduce((a, t) => a + t.fired, 0);
    return d.templates.map((t) => ({ shards: d.label, template: t.template, share: total ? (100 * t.fired) / total : 0, fired: t.fired }));
  });
  if (values.length === 0) return null;
  const order = [...new Set(values.map((v) => v.template))];
  const spec = {
    data: { values },
    width: 480,
    height: dirs.length > 1 ? { step: 8, for: 'offset' } : { step: 18 },
    mark: { type: 'bar' },
    encoding: {
      y: { field: 'template', type: 'nominal', title: null, sort: order },
      ...(dirs.length > 1 ? { yOffset: { field: 'shards', sort: dirs.map((d) => d.label) } } : {}),
      x: { field: 'share', type: 'quantitative', title: '% of non-zero features', axis: { format: '.0f' } },
      color: dirColor(dirs),
    },
  };
  return { id: 'templates', title: 'Features by template', spec: top(spec) };
}

/** Shortened key names for the weight chart's axis (the table beside it has them whole). */
export function weightLabel(r: { bucket: number; names: string[] }): string {
  const name = r.names[0] ?? '(no name kept)';
  const more = r.names.length > 1 ? ` +${r.names.length - 1}` : '';
  const short = name.length > 52 ? `${name.slice(0, 51)}…` : name;
  return `${short}${more} · #${r.bucket.toLocaleString('en-US')}`;
}

/** The highest and lowest weights, with names. */
export function weightChart(model: ModelFigures): Chart | null {
  if (model.top.length === 0) return null;
  const values = model.top.map((r) => ({ label: weightLabel(r), weight: r.weight, sign: r.weight >= 0 ? 'prefers the candidate' : 'counts against it' }));
  const spec = {
    data: { values },
    width: 440,
    height: { step: 16 },
    mark: { type: 'bar' },
    encoding: {
      y: { field: 'label', type: 'nominal', title: null, sort: { field: 'weight', order: 'descending' }, axis: { labelLimit: 420, labelFontSize: 10 } },
      x: { field: 'weight', type: 'quantitative', title: 'weight', axis: { tickCount: 8 } },
      color: { field: 'sign', type: 'nominal', title: null, scale: { domain: ['prefers the candidate', 'counts against it'], range: ['#3d9a6a', '#c2553d'] }, legend: { orient: 'bottom', labelLimit: 300 } },
    },
  };
  return { id: 'weights', title: 'Top weighted features', spec: top(spec) };
}

/**
 * Compiles a Vega-Lite spec and renders it to an SVG string, headless. A
 * warning from either library (a field the data lacks, a channel that does
 * not fit the mark …) is a mistake in our spec: it throws instead of printing.
 */
export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const warnings: string[] = [];
  const logger = vega.logger(vega.Warn, 'warn', (_method, level, args) => {
    warnings.push(`${level} ${args.map(String).join(' ')}`);
  });
  const view = new vega.View(vega.parse(compile(spec, { logger }).spec), { renderer: 'none', logger });
  try {
    const svg = await view.toSVG();
    if (warnings.length) throw new Error(`the chart spec gave warnings: ${warnings.join('; ')}`);
    return svg;
  } finally {
    view.finalize();
  }
}

/**
 * Mark items drawn in an SVG as Vega writes it: the children of each
 * `role-mark` group that is not itself a group (axes, legends and titles have
 * other roles). The browser check counts the same in the live DOM.
 */
export function countMarks(svg: string): number {
  let n = 0;
  const open = /<g class="mark-(?!group)[a-z]+ role-mark[^"]*"[^>]*>/g;
  while (open.exec(svg)) {
    const end = svg.indexOf('</g>', open.lastIndex);
    const body = svg.slice(open.lastIndex, end);
    n += (body.match(/<(path|line|rect|circle|text|image)\b/g) ?? []).length;
  }
  return n;
}
