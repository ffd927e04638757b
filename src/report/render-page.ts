/**
 * The report page: one self-contained HTML document (inline CSS, charts as
 * inline SVG, no script, nothing fetched when viewed). Every string that
 * comes from data (paths, ids, feature names) goes through `escapeHtml`.
 * Pure: takes the figures and the rendered charts, returns text.
 */
import type { F1Row } from '../core/f1-table.js';
import type { ModelFigures, ReportData, ShardDirFigures } from './report-data.js';

export interface RenderedChart {
  id: string;
  title: string;
  svg: string;
}

/** The charts, in page order; null where the figures give nothing to draw (the page says so). */
export interface PageCharts {
  depth: RenderedChart | null;
  length: RenderedChart | null;
  learning: RenderedChart | null;
  listSizes: RenderedChart | null;
  positions: RenderedChart | null;
  occupancy: RenderedChart | null;
  collisions: RenderedChart | null;
  templates: RenderedChart | null;
  weights: RenderedChart | null;
}

const ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ESCAPES[c]);
}

const int = (x: number) => x.toLocaleString('en-US');
const f2 = (x: number) => x.toFixed(2);
const pct = (x: number, digits = 1) => `${(100 * x).toFixed(digits)} %`;

const CSS = `
body { font: 15px/1.5 Helvetica, Arial, sans-serif; color: #222; margin: 0; background: #f6f5f1; }
main { max-width: 980px; margin: 0 auto; padding: 24px 28px 60px; background: #fff; }
h1 { font-size: 24px; margin: 0 0 4px; }
h2 { font-size: 19px; margin: 36px 0 6px; border-bottom: 1px solid #ddd; padding-bottom: 3px; }
p.lead { color: #555; margin-top: 0; }
dl.terms { display: grid; grid-template-columns: max-content 1fr; gap: 4px 16px; margin: 12px 0; }
dl.terms dt { font-weight: bold; }
dl.terms dd { margin: 0; }
table { border-collapse: collapse; margin: 10px 0; font-size: 13px; }
th, td { padding: 3px 10px; border-bottom: 1px solid #e6e6e6; text-align: right; vertical-align: top; }
th { background: #f1f1ee; font-weight: 600; }
td.text, th.text { text-align: left; }
td.names { text-align: left; font-family: Menlo, Consolas, monospace; font-size: 12px; word-break: break-all; }
figure { margin: 14px 0 8px; overflow-x: auto; }
figcaption { font-size: 13px; color: #555; max-width: 760px; }
.absent { color: #666; font-style: italic; }
code { font-family: Menlo, Consolas, monospace; font-size: 13px; }
`;

const NOTHING = '<p class="absent">Nothing to draw: the shards hold no sentence with candidates.</p>';

function figure(c: RenderedChart | null, caption: string, absent = NOTHING): string {
  if (!c) return absent;
  return `<figure id="chart-${c.id}" data-chart="${c.id}">\n${c.svg}\n<figcaption>${caption}</figcaption>\n</figure>`;
}

function rowCells(r: F1Row | null): string {
  if (!r) return '<td>–</td><td>–</td><td>–</td>';
  return `<td>${f2(r.precision)}</td><td>${f2(r.recall)}</td><td>${f2(r.f1)}</td>`;
}

function summaryTable(dirs: ShardDirFigures[], withModel: boolean): string {
  const head = `<tr><th class="text">shards</th><th>sentences</th><th>candidates</th><th class="text">system</th><th>precision</th><th>recall</th><th>F1</th>${withModel ? '<th>gap recovered</th><th>bootstrap p</th>' : ''}</tr>`;
  const body = dirs.flatMap((d) => {
    const systems: [string, F1Row | null][] = [['base', d.base], ['oracle', d.oracle]];
    if (withModel) systems.push(['re-ranked', d.reranked]);
    return systems.map(([name, row], k) => {
      const first = k === 0 ? `<td class="text" rowspan="${systems.length}">${escapeHtml(d.label)}</td><td rowspan="${systems.length}">${int(d.sentences)}</td><td rowspan="${systems.length}">${int(d.candidates)}</td>` : '';
      let extra = '';
      if (withModel && k === 0) {
        const e = d.eval!;
        const p = e.bootstrap.p === 0 ? `&lt; ${(1 / e.bootstrap.samples).toPrecision(1)}` : e.bootstrap.p.toFixed(4);
        extra = `<td rowspan="${systems.length}">${e.gapRecovered === null ? '–' : pct(e.gapRecovered)}</td><td rowspan="${systems.length}">${p}<br><small>${int(e.bootstrap.samples)} samples, seed ${e.bootstrap.seed}</small></td>`;
      }
      return `<tr data-shards="${escapeHtml(d.label)}" data-system="${name}">${first}<td class="text">${name}</td>${rowCells(row)}${extra}</tr>`;
    });
  });
  return `<table id="summary">\n${head}\n${body.join('\n')}\n</table>`;
}

function lengthTable(dirs: ShardDirFigures[], withModel: boolean): string {
  const head = `<tr><th class="text">shards</th><th class="text">words</th><th>sentences</th><th>base F1</th><th>oracle F1</th>${withModel ? '<th>re-ranked F1</th>' : ''}</tr>`;
  const body = dirs.flatMap((d) => d.byLength.map((r) => `<tr><td class="text">${escapeHtml(d.label)}</td><td class="text">${r.words}</td><td>${int(r.sentences)}</td><td>${f2(r.base.f1)}</td><td>${f2(r.oracle.f1)}</td>${withModel ? `<td>${r.reranked ? f2(r.reranked.f1) : '–'}</td>` : ''}</tr>`));
  return `<table class="by-length">\n${head}\n${body.join('\n')}\n</table>`;
}

function gapTable(dirs: ShardDirFigures[], withModel: boolean): string {
  const rows = dirs.flatMap((d) => d.gaps.map((g) => `<tr><td class="text">${escapeHtml(d.label)}</td><td class="text"><code>${escapeHtml(g.id)}</code></td><td>${int(g.number)}</td><td>${int(g.words)}</td><td>${int(g.candidates)}</td><td>${f2(g.base)}</td><td>${f2(g.oracle)}</td><td>${int(g.oraclePosition)}</td>${withModel ? `<td>${g.reranked === null ? '–' : f2(g.reranked)}</td>` : ''}</tr>`));
  if (rows.length === 0) return '<p class="absent">In every sentence the base 1-best is already as good as the best candidate.</p>';
  const head = `<tr><th class="text">shards</th><th class="text">id</th><th>sentence no.</th><th>words</th><th>candidates</th><th>base F1</th><th>oracle F1</th><th>oracle position</th>${withModel ? '<th>re-ranked F1</th>' : ''}</tr>`;
  return `<table class="gaps">\n${head}\n${rows.join('\n')}\n</table>`;
}

function hashingTable(dirs: ShardDirFigures[]): string {
  const head = '<tr><th class="text">shards</th><th>hash space</th><th>buckets that vary</th><th>share</th><th>distinct keys</th><th>buckets holding them</th><th>collision rate</th><th>expected N/(2m)</th></tr>';
  const body = dirs.map((d) => {
    const space = 2 ** d.bits;
    const vary = d.hashing.varyingAtLeast[0]?.buckets ?? 0;
    const n = d.hashing.names;
    const names = n ? `<td>${int(n.keys)}</td><td>${int(n.buckets)}</td><td>${pct(n.collisionRate, 2)}</td><td>${pct(n.expectedRate, 2)}</td>` : '<td colspan="4" class="absent">no names kept</td>';
    return `<tr><td class="text">${escapeHtml(d.label)}</td><td>2<sup>${d.bits}</sup> = ${int(space)}</td><td>${int(vary)}</td><td>${pct(vary / space, 2)}</td>${names}</tr>`;
  });
  return `<table class="hashing">\n${head}\n${body.join('\n')}\n</table>`;
}

function templateTable(dirs: ShardDirFigures[]): string {
  // One row per template, a group of columns per directory.
  const templates = [...new Set(dirs.flatMap((d) => d.templates.map((t) => t.template)))];
  const groups = dirs.map((d) => `<th colspan="3" class="text">${escapeHtml(d.label)}</th>`).join('');
  const head = `<tr><th></th>${groups}</tr>\n<tr><th class="text">template</th>${dirs.map(() => '<th>buckets fired</th><th>of which vary</th><th>share</th>').join('')}</tr>`;
  const body = templates.map((name) => {
    const cells = dirs.map((d) => {
      const total = d.templates.reduce((a, t) => a + t.fired, 0);
      const t = d.templates.find((x) => x.template === name);
      return t ? `<td>${int(t.fired)}</td><td>${int(t.varying)}</td><td>${total ? pct(t.fired / total) : '–'}</td>` : '<td>–</td><td>–</td><td>–</td>';
    });
    return `<tr><td class="text"><code>${escapeHtml(name)}</code></td>${cells.join('')}</tr>`;
  });
  return `<table class="templates">\n${head}\n${body.join('\n')}\n</table>`;
}

function weightTable(model: ModelFigures): string {
  const head = '<tr><th>weight</th><th>bucket</th><th class="text">kept key names</th></tr>';
  const body = model.top.map((r) => `<tr><td>${r.weight.toFixed(4)}</td><td>${int(r.bucket)}</td><td class="names">${r.names.length ? r.names.map(escapeHtml).join('<br>') : '<span class="absent">no name kept</span>'}</td></tr>`);
  return `<table class="weights">\n${head}\n${body.join('\n')}\n</table>`;
}

export function renderPage(data: ReportData, charts: PageCharts, tool: { version: string }): string {
  const dirs = data.shards;
  const model = data.model;
  const withModel = model !== null;
  const dirList = dirs.map((d) => `<li><code>${escapeHtml(d.dir)}</code>: ${int(d.sentences)} sentences, ${int(d.candidates)} candidates${d.noCandidates ? `, ${int(d.noCandidates)} without candidates` : ''}</li>`).join('\n');
  const longest = Math.max(0, ...dirs.map((d) => d.oracleAtDepth.length));
  const parts: string[] = [];
  parts.push(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>sheaf report</title>
<style>${CSS}</style>
</head>
<body>
<main>
<h1>sheaf report</h1>
<p class="lead">Made by sheaf ${escapeHtml(tool.version)} from ${dirs.length === 1 ? 'one shard directory' : `${dirs.length} shard directories`}${withModel ? ` and the model <code>${escapeHtml(model.dir)}</code>` : ''}.</p>
<ul>
${dirList}
</ul>`);
  parts.push(`<h2 id="terms">What the figures mean</h2>
<dl class="terms">
<dt>base</dt><dd>The base parser's own first choice in each list (rank 1). This is what you get without a re-ranker.</dd>
<dt>oracle</dt><dd>The best candidate of each list by sentence F1, as if someone who knew the gold tree picked it (ties go to the better base rank). No re-ranker choosing from these lists can score higher.</dd>
<dt>re-ranked</dt><dd>The candidate the trained model scores highest in each list.</dd>
<dt>F1</dt><dd>Labeled bracket F1 (PARSEVAL) over the whole set: brackets are counted over all sentences first, then precision, recall and F1 are taken from the sums.</dd>
</dl>`);
  if (!withModel) parts.push('<p class="absent">No model was given (<code>--model</code>), so there are no re-ranked figures, no learning curve and no feature weights on this page.</p>');
  parts.push(`<h2 id="summary-title">F1 overall</h2>\n${summaryTable(dirs, withModel)}`);
  if (withModel) parts.push('<p>These are the figures <code>sheaf eval --json</code> gives for the same shards and model. "Gap recovered" is the share of the distance from base to oracle that the model closes.</p>');

  parts.push(`<h2 id="depth">Oracle F1 by list depth</h2>
${figure(charts.depth, `F1 if, in every sentence, the best of the top <i>k</i> candidates of the base ranking were picked, for <i>k</i> = 1 … ${int(longest)}. At depth 1 this is the base 1-best (the diamond); at full depth it is the oracle.${withModel ? ' The dashed line is the re-ranked F1.' : ''} A flat tail means longer lists add little for a re-ranker.`)}`);

  parts.push(`<h2 id="length">F1 by sentence length</h2>
${figure(charts.length, `F1 per sentence-length bucket (the table below gives the number of sentences in each). Longer sentences usually leave more room between base and oracle.`)}
${lengthTable(dirs, withModel)}`);

  parts.push(`<h2 id="learning">Learning curve</h2>`);
  if (!withModel) parts.push('<p class="absent">Needs a model (<code>--model</code>).</p>');
  else if (!charts.learning) parts.push('<p class="absent">The model was trained without dev shards (<code>sheaf train --dev</code>), so it has no dev F1 per epoch.</p>');
  else parts.push(figure(charts.learning, `Re-ranked F1 on the dev shards after each ${model.method === 'perceptron' ? 'epoch' : 'iteration'}. The ringed point is the one whose weights the model kept (the best dev F1).`));

  parts.push(`<h2 id="lists">The candidate lists</h2>
${figure(charts.listSizes, 'How many candidates each sentence\'s list holds, as a share of the sentences.')}
${figure(charts.positions, `Where the oracle's choice${withModel ? ' and the model\'s choice' : ''} sit in the base ranking. Position 1 means the base 1-best was already the best candidate (or tied with it).`)}
<p>The sentences where the base 1-best falls furthest below the best candidate of its list:</p>
${gapTable(dirs, withModel)}`);

  parts.push(`<h2 id="hashing">Hash-space occupancy and collisions</h2>
${figure(charts.occupancy, `How many buckets of the hash space vary between the candidates of at least <i>T</i> sentences (from the count files prepare writes beside each shard).${withModel ? ' The dashed line is the cut-off the model was trained with: training kept the buckets that vary in at least that many of its training sentences.' : ''} Both axes are logarithmic.`, '<p class="absent">No bucket varies within any list: there is nothing to train on in these shards.</p>')}
${figure(charts.collisions, 'The share of distinct feature keys that landed in a bucket already taken by another key, as prepare measured it, against N/(2m), what uniform hashing of N keys into m buckets gives to first order.', '<p class="absent">The shards kept no feature names (the hashing stage\'s <code>names</code> option), so prepare did not measure collisions.</p>')}
${hashingTable(dirs)}`);

  parts.push(`<h2 id="templates">Features by template</h2>
${figure(charts.templates, 'Each feature template\'s share of the non-zero features: buckets a template fired, counted once per sentence and summed, as prepare recorded them in the manifest.', '<p class="absent">The manifests record no per-template counts.</p>')}
${templateTable(dirs)}`);

  parts.push(`<h2 id="weights">Top weighted features</h2>`);
  if (!withModel) parts.push('<p class="absent">Needs a model (<code>--model</code>).</p>');
  else if (!charts.weights) parts.push('<p class="absent">The model has no non-zero weight.</p>');
  else {
    parts.push(figure(charts.weights, `The ${int(model.top.filter((r) => r.side === 'highest').length)} highest and ${int(model.top.filter((r) => r.side === 'lowest').length)} lowest weights of the model (${int(model.features.nonZero)} non-zero of ${int(model.features.kept)} kept buckets, cut-off ${int(model.cutoff)}, trained on ${int(model.trainedOn)} sentences). A bucket can hold several keys; the table lists those kept.`));
    if (!model.namesKept) parts.push('<p class="absent">The model has no names.json: prepare the shards with <code>names</code> set in the hashing stage to see key names.</p>');
    parts.push(weightTable(model));
  }
  parts.push('</main>\n</body>\n</html>\n');
  return parts.join('\n');
}
