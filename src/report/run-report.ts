/**
 * `sheaf report`: shard directories (and a model) → one self-contained HTML
 * page. Figures (report-data.ts) → Vega-Lite specs (charts.ts) → SVG →
 * page (render-page.ts), written atomically, or to stdout for `-o -`.
 */
import { existsSync, mkdirSync, statSync } from 'node:fs';
import { dirname } from 'node:path';
import { UsageError } from '../core/errors.js';
import { writeFileAtomic } from '../io/files.js';
import { TOOL_VERSION } from '../version.js';
import { collisionChart, countMarks, depthChart, learningChart, lengthChart, listSizeChart, occupancyChart, positionChart, renderSvg, templateChart, weightChart, type Chart } from './charts.js';
import { reportData, type ReportData, type ReportDataOptions } from './report-data.js';
import { renderPage, type PageCharts, type RenderedChart } from './render-page.js';

export interface ReportOptions extends ReportDataOptions {
  /** The HTML file to write, or `-` for stdout (the page is then returned in `html`). */
  out: string;
  quiet?: boolean;
}

export interface ReportSummary {
  out: string;
  bytes: number;
  /** Each chart drawn, with the mark items its SVG holds. */
  charts: { id: string; marks: number }[];
  seconds: number;
  html?: string;
}

export async function runReport(o: ReportOptions, log: (line: string) => void = () => {}): Promise<ReportSummary> {
  const started = Date.now();
  if (!o.out) throw new UsageError('expected `-o` to name the HTML file to write (or `-` for stdout)');
  if (o.out !== '-' && existsSync(o.out) && statSync(o.out).isDirectory()) {
    throw new UsageError(`\`-o ${o.out}\` is a directory; expected the path of the HTML file to write, e.g. \`-o ${o.out.replace(/[\\/]+$/, '')}/report.html\``);
  }
  const say = (l: string) => {
    if (!o.quiet) log(`sheaf report: ${l}`);
  };
  const data = await reportData(o);
  say(`read ${data.shards.map((d) => `${d.sentences.toLocaleString('en-US')} sentences from ${d.dir}`).join(', ')}${data.model ? ` and the model ${data.model.dir}` : ''}`);
  const { charts, drawn } = await drawCharts(data);
  const html = renderPage(data, charts, { version: TOOL_VERSION });
  const bytes = Buffer.byteLength(html, 'utf8');
  if (o.out !== '-') {
    mkdirSync(dirname(o.out), { recursive: true });
    writeFileAtomic(o.out, html);
    say(`${drawn.length} charts, ${bytes.toLocaleString('en-US')} bytes → ${o.out}`);
  }
  return { out: o.out, bytes, charts: drawn, seconds: (Date.now() - started) / 1000, ...(o.out === '-' ? { html } : {}) };
}

/** Every chart the figures allow, rendered to SVG; a chart with data that drew nothing is an internal error. */
export async function drawCharts(data: ReportData): Promise<{ charts: PageCharts; drawn: { id: string; marks: number }[] }> {
  const drawn: { id: string; marks: number }[] = [];
  const render = async (c: Chart): Promise<RenderedChart> => {
    const svg = await renderSvg(c.spec);
    const marks = countMarks(svg);
    if (marks === 0) throw new Error(`the chart \`${c.id}\` rendered no marks`);
    drawn.push({ id: c.id, marks });
    return { id: c.id, title: c.title, svg };
  };
  const maybe = async (c: Chart | null) => (c ? render(c) : null);
  const dirs = data.shards;
  const charts: PageCharts = {
    depth: await maybe(depthChart(dirs)),
    length: await maybe(lengthChart(dirs)),
    learning: data.model ? await maybe(learningChart(data.model)) : null,
    listSizes: await maybe(listSizeChart(dirs)),
    positions: await maybe(positionChart(dirs)),
    occupancy: await maybe(occupancyChart(dirs, data.model ? data.model.cutoff : null)),
    collisions: await maybe(collisionChart(dirs)),
    templates: await maybe(templateChart(dirs)),
    weights: data.model ? await maybe(weightChart(data.model)) : null,
  };
  return { charts, drawn };
}
